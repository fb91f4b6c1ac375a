/**
 * The two-query profile (app/core/scan/profile.ts profileLog) against the one-query profile that
 * measures every figure over every row (profileSql with FULL_PLAN, exact count(DISTINCT) and text
 * screens everywhere): the same wherever the whole-log query measured, the sample's exact figures
 * elsewhere, labelled as such. Reference: DuckDB's own count(DISTINCT) and TRY_CAST over all rows; which rows
 * the sample holds is test/core/profile-sample.test.ts's (node:crypto's MD5 of each row's hash text).
 */
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { describeSql, parseDescribe, parseProfile, PREFIX_ROWS, profileLog, profileSql, type Profile } from '../../app/core/scan/profile.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';

const SAMPLE = new URL('../../sample-data/', import.meta.url).pathname;
let engine: NativeEngine;
beforeAll(async () => {
  engine = await createNativeEngine();
  // 150,000 rows: a region that first appears after the first 100,000 rows, a few-valued text column
  // and a many-valued one whose numbers start after them, a unique id, and text numbers with a few words
  await engine.query(`CREATE TABLE late_base AS SELECT
      'd-' || i::VARCHAR AS decision_id,
      CASE WHEN i >= 120000 AND i % 2 = 0 THEN 'new-quarter' ELSE ['north', 'south', 'east'][1 + i % 3] END AS region,
      CASE WHEN i < 110000 THEN 'n/a' ELSE (i % 7)::VARCHAR END AS late_numbers,
      CASE WHEN i < 110000 THEN 'name-' || i::VARCHAR ELSE i::VARCHAR END AS late_codes,
      CASE WHEN i % 1000 = 0 THEN 'none' ELSE ((i % 50) / 100.0)::VARCHAR END AS p_text,
      (i % 10) / 10.0 AS score
    FROM range(150000) t(i)`);
  // and rare_codes, names but for 50 numbers in rows outside the sample, whichever of the two texts they hold
  const t = await engine.query('SELECT decision_id, region, late_numbers, late_codes, p_text FROM late_base ORDER BY decision_id');
  const md5 = (text: string) => createHash('md5').update(text).digest('hex');
  const base = Array.from({ length: t.rowCount }, (_, i) => t.columns.map((c) => `${String(c[i])}|`).join(''));
  const id = (i: number) => Number(String(t.columns[0]?.[i]).slice(2));
  const named = base.map((b, i) => md5(`${b}name-${id(i)}|`));
  const cut = [...named].sort()[PREFIX_ROWS - 1]!;
  rare = base.flatMap((b, i) => (named[i]! > cut && md5(`${b}${id(i)}|`) > cut ? [id(i)] : [])).slice(0, 50);
  await engine.query(`CREATE TABLE late AS SELECT *, CASE WHEN i IN (${rare.join(', ')}) THEN i::VARCHAR ELSE 'name-' || i::VARCHAR END AS rare_codes FROM (SELECT *, CAST(substr(decision_id, 3) AS INTEGER) AS i FROM late_base) ORDER BY i`);
  await engine.query('ALTER TABLE late DROP COLUMN i');
});
let rare: number[] = [];
afterAll(async () => engine?.close());

async function full(relation: string): Promise<Profile> {
  const cols = parseDescribe(await engine.query(describeSql(relation)));
  return parseProfile(await engine.query(profileSql(relation, cols)), cols);
}

const col = (p: Profile, name: string) => p.columns.find((c) => c.name === name)!;

describe('profileLog', () => {
  it('equals the all-rows profile on the demo log for every figure measured over the whole log', async () => {
    const src = await engine.register({ kind: 'path', paths: [`${SAMPLE}maple-row-demo.parquet`] });
    const two = await profileLog((sql) => engine.query(sql), src.relation);
    const one = await full(src.relation);
    expect(two.rows).toBe(one.rows);
    for (const c of two.columns) {
      const ref = col(one, c.name);
      const blank = { distinct: 0, distinctBasis: 0, distinctRows: 0, parseBasis: 0 };
      // parse counts too: no demo text column holds numbers or timestamps, unscreened or not
      expect({ ...c, ...blank }).toEqual({ ...ref, ...blank });
      if (c.distinctBasis === 'all rows') expect(c.distinct).toBe(ref.distinct);
      else expect(c.distinct).toBeLessThanOrEqual(ref.distinct);
    }
    // six regions, exactly (the HyperLogLog count once said five)
    expect(col(two, 'region')).toMatchObject({ distinct: 6, distinctBasis: 'all rows' });
    // the id's distinct values are counted in the sample only (which rows: profile-sample.test.ts)
    expect(col(two, 'decision_id')).toMatchObject({ distinctBasis: 'sample', distinctRows: PREFIX_ROWS });
  });

  it('counts values that appear only after the first rows, where it counts exactly (the sample is not the first rows)', async () => {
    const two = await profileLog((sql) => engine.query(sql), 'late');
    const one = await full('late');
    expect(col(two, 'region')).toMatchObject({ distinct: 4, distinctBasis: 'all rows' });
    expect(col(two, 'region').distinct).toBe(col(one, 'region').distinct);
    // few-valued columns are counted per value over every row, their text screened per value
    expect(col(two, 'late_numbers')).toMatchObject({ parsedAsNumber: 40000, parseBasis: 'all rows', distinct: 8 });
    expect(col(two, 'late_numbers')).toEqual(col(one, 'late_numbers'));
    // the text of numbers with a few words is screened over every row: same counts as the full profile
    expect(col(two, 'p_text')).toMatchObject({ parsedAsNumber: col(one, 'p_text').parsedAsNumber, parseBasis: 'all rows' });
    expect(col(two, 'p_text').parsedAsNumber).toBe(150000 - 150);
    expect(col(two, 'score')).toMatchObject({ min: 0, max: 0.9, nonBinary: col(one, 'score').nonBinary });
  });

  it('says so where it kept the sample\'s figures', async () => {
    const two = await profileLog((sql) => engine.query(sql), 'late');
    const one = await full('late');
    // nothing in the sample of the many-valued rare_codes starts like a number, so it was not screened further
    expect(rare.length).toBe(50);
    expect(col(two, 'rare_codes')).toMatchObject({ parsedAsNumber: 0, parseBasis: 'sample', nonNull: 150000, distinctBasis: 'sample' });
    expect(col(one, 'rare_codes').parsedAsNumber).toBe(50);
    // late_codes' numbers (rows 110,000 on) are in the sample too: screened over every row
    expect(col(two, 'late_codes')).toMatchObject({ parsedAsNumber: 40000, parseBasis: 'all rows' });
    expect(col(two, 'decision_id')).toMatchObject({ distinct: PREFIX_ROWS, distinctBasis: 'sample' });
    expect(col(one, 'decision_id').distinct).toBe(150000);
  });

  it('reads a short log in one query, every figure over all of it', async () => {
    const queries: string[] = [];
    const two = await profileLog((sql) => engine.query(sql), '(SELECT * FROM late LIMIT 5000)', (_n, sql) => { queries.push(sql); return sql; });
    expect(queries.length).toBe(2); // DESCRIBE and the sample's query (the whole log)
    expect(two.columns.every((c) => c.distinctBasis === 'all rows')).toBe(true);
    expect(two).toEqual(await full('(SELECT * FROM late LIMIT 5000)'));
  });
});
