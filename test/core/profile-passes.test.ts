/**
 * The two-query profile (app/core/scan/profile.ts profileLog) against the one-query profile that
 * measures every figure over every row (profileSql with FULL_PLAN, exact count(DISTINCT) and text
 * screens everywhere): the same wherever the whole-log query measured, the first rows' exact figures
 * elsewhere, labelled as such. Reference: DuckDB's own count(DISTINCT) and TRY_CAST over all rows.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { describeSql, parseDescribe, parseProfile, PREFIX_ROWS, profileLog, profileSql, type Profile } from '../../app/core/scan/profile.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';

const SAMPLE = new URL('../../sample-data/', import.meta.url).pathname;
let engine: NativeEngine;
beforeAll(async () => {
  engine = await createNativeEngine();
  // 150,000 rows: a region that first appears after the first 100,000 rows, a few-valued text column
  // and a many-valued one whose numbers start after them, a unique id, and text numbers with a few words
  await engine.query(`CREATE TABLE late AS SELECT
      'd-' || i::VARCHAR AS decision_id,
      CASE WHEN i >= 120000 AND i % 2 = 0 THEN 'new-quarter' ELSE ['north', 'south', 'east'][1 + i % 3] END AS region,
      CASE WHEN i < 110000 THEN 'n/a' ELSE (i % 7)::VARCHAR END AS late_numbers,
      CASE WHEN i < 110000 THEN 'name-' || i::VARCHAR ELSE i::VARCHAR END AS late_codes,
      CASE WHEN i % 1000 = 0 THEN 'none' ELSE ((i % 50) / 100.0)::VARCHAR END AS p_text,
      (i % 10) / 10.0 AS score
    FROM range(150000) t(i)`);
});
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
    // the first rows are the file's first rows: DuckDB's file_row_number says which
    const first = await engine.query(`SELECT count(DISTINCT decision_id) FROM read_parquet('${SAMPLE}maple-row-demo.parquet', file_row_number = true) WHERE file_row_number < ${PREFIX_ROWS}`);
    expect(col(two, 'decision_id')).toMatchObject({ distinct: Number(first.columns[0]?.[0]), distinctBasis: 'first rows', distinctRows: PREFIX_ROWS });
  });

  it('counts values that appear only after the first rows, where it counts exactly', async () => {
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

  it('says so where it kept the first rows\' figures', async () => {
    const two = await profileLog((sql) => engine.query(sql), 'late');
    const one = await full('late');
    // nothing in the first 100,000 rows of the many-valued late_codes starts like a number, so it was not screened further
    expect(col(two, 'late_codes')).toMatchObject({ parsedAsNumber: 0, parseBasis: 'first rows', nonNull: 150000, distinctBasis: 'first rows' });
    expect(col(one, 'late_codes').parsedAsNumber).toBe(40000);
    expect(col(two, 'decision_id')).toMatchObject({ distinct: PREFIX_ROWS, distinctBasis: 'first rows' });
    expect(col(one, 'decision_id').distinct).toBe(150000);
  });

  it('reads a short log in one query, every figure over all of it', async () => {
    const queries: string[] = [];
    const two = await profileLog((sql) => engine.query(sql), '(SELECT * FROM late LIMIT 5000)', (_n, sql) => { queries.push(sql); return sql; });
    expect(queries.length).toBe(2); // DESCRIBE and the first-rows query
    expect(two.columns.every((c) => c.distinctBasis === 'all rows')).toBe(true);
    expect(two).toEqual(await full('(SELECT * FROM late LIMIT 5000)'));
  });
});
