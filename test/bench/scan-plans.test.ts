/**
 * The propensity-grouped plans of the cube and tail queries (app/core/scan/cube.ts, rows.ts) answer
 * exactly what the row-level plans answer, on the demo log and on a log with invalid propensities and
 * null rewards: every cube cell to 1e-12 relative (sums are reassociated), the top weights and the
 * log10-weight histogram identically.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolveRoles } from '../../app/core/roles/roles.ts';
import { cubeGroupsSelect, cubeReadsGroups, cubeSql, groupRows, groupsByReward, parseCube, rewardShift } from '../../app/core/scan/cube.ts';
import { chooseBuckets, rowExpressions, timeRangeUs } from '../../app/core/scan/expressions.ts';
import { describeSql, parseDescribe, parseProfile, profileSql } from '../../app/core/scan/profile.ts';
import { clipPropensityBound, clipRowsSql, duplicatesPartitions, duplicatesSql, examplesSql, parseClipRows, parseDuplicates, parseTail, tailSql } from '../../app/core/scan/rows.ts';
import { SEP } from '../../app/core/cube/rollup.ts';
import { parseTarget, type TargetPolicy } from '../../app/core/targets/targets.ts';
import { duckdb } from '../../app/core/sql/dialect-duckdb.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';
import { firstDifference } from '../core/audit-helpers.ts';

const SAMPLE = new URL('../../sample-data/', import.meta.url).pathname;
const V9 = `${SAMPLE}maple-row-v9-policy.csv`;

let engine: NativeEngine;
beforeAll(async () => {
  engine = await createNativeEngine();
  // invalid propensities of every kind, p = 1, null and non-finite rewards, a null segment value
  await engine.query(`CREATE TABLE odd AS SELECT
      ['north-harbor', 'old-town', NULL][1 + i % 3] AS region, ['ios', 'web'][1 + i % 2] AS device, ['new', 'loyal'][1 + i % 2] AS tenure,
      ['bakery', 'household', 'recipe-kit'][1 + (i * 7) % 3] AS promotion,
      [0.25, 0.5, 1.0, NULL, 0.0, -0.1, 1.5, 'NaN'::DOUBLE, 0.002][1 + (i * 5) % 9] AS propensity,
      [1.0, 0.0, NULL, 'Infinity'::DOUBLE, 2.5][1 + (i * 3) % 5] AS ordered,
      TIMESTAMP '2026-03-02' + INTERVAL (i * 7) MINUTE AS logged_at
    FROM range(5000) t(i)`);
  // the same with a finite reward range (so the exact sums are fixed point), -0.0 beside 0.0 and NaN among the rewards
  await engine.query(`CREATE TABLE odd_finite AS SELECT * REPLACE ([1.0, 0.0, NULL, 'NaN'::DOUBLE, 2.5, '-0.0'::DOUBLE, 0.3][1 + (hash(logged_at) % 7)::INTEGER] AS ordered) FROM odd`);
});
afterAll(async () => engine?.close());

async function plans(relation: string) {
  const cols = parseDescribe(await engine.query(describeSql(relation)));
  const profile = parseProfile(await engine.query(profileSql(relation, cols)), cols);
  const roles = resolveRoles(profile, { segments: ['region', 'device', 'tenure'], action: 'promotion', propensity: 'propensity', reward: 'ordered', time: 'logged_at' });
  const rows = rowExpressions(roles, profile, chooseBuckets(timeRangeUs(roles, profile), 'auto', 60));
  const target = parseTarget({ spec: `table:${V9}`, tableText: readFileSync(V9, 'utf8') }, { actionColumn: 'promotion', logColumns: cols.map((c) => c.name), targetColumn: null });
  const uniform = parseTarget({ spec: 'uniform' }, { actionColumn: 'promotion', logColumns: cols.map((c) => c.name), targetColumn: null });
  const segs = ['region', 'device', 'tenure'];
  const out = [];
  for (const byPropensity of [false, true]) {
    const cube = (capped: number[]) => engine.query(cubeSql({ relation, rows, capped, cap: 1, floor: 0.01, byPropensity })).then((t) => parseCube(t, 3));
    const tail = (t: typeof target, limit: number) => engine.query(tailSql(relation, rows, t, segs, ['bakery', 'household', 'recipe-kit'], limit, byPropensity)).then(parseTail);
    out.push({ cube: await cube([]), capped: await cube([0]), tail: await tail(target, 700), uniformTail: await tail(uniform, 50) });
  }
  return out as [typeof out[0], typeof out[0]];
}

describe.each([
  ['the demo log', `read_parquet('${SAMPLE}maple-row-demo.parquet')`],
  ['a log with every kind of invalid value', 'odd'],
])('%s', (_name, relation) => {
  it('the cube and the tails agree between the row-level and the propensity-grouped plans', async () => {
    const [rowLevel, grouped] = await plans(relation);
    expect(rowLevel.cube.length).toBeGreaterThan(10);
    expect(firstDifference(grouped.cube, rowLevel.cube, 1e-12)).toBeNull();
    expect(firstDifference(grouped.capped, rowLevel.capped, 1e-12)).toBeNull();
    expect(rowLevel.tail.weights.length).toBeGreaterThan(0);
    expect(grouped.tail).toEqual(rowLevel.tail);
    expect(grouped.uniformTail).toEqual(rowLevel.uniformTail);
  });
});

describe('example rows', () => {
  // The plain form: every matching row, numbered per finding in the requested order.
  const reference = (relation: string, wheres: string[], n: number, order: string[]) => [
    `WITH m AS MATERIALIZED (SELECT * FROM ${relation} WHERE ${wheres.map((w) => `(${w})`).join(' OR ')})`,
    `SELECT f.__finding, m.* FROM m, (VALUES ${wheres.map((_, i) => `(${i})`).join(', ')}) AS f(__finding)`,
    `WHERE CASE f.__finding ${wheres.map((w, i) => `WHEN ${i} THEN (${w})`).join(' ')} END`,
    `QUALIFY row_number() OVER (PARTITION BY f.__finding ORDER BY ${order.map((o) => `m.${o}`).join(', ')}) <= ${n}`,
    `ORDER BY f.__finding, ${order.map((o) => `m.${o}`).join(', ')}`,
  ].join('\n');
  const wheres = [`"region" = 'old-town'`, `"device" = 'web' AND "promotion" = 'bakery'`, `"ordered" IS NULL`, `"propensity" IS NULL OR "propensity" <= 0`, `"region" = 'nowhere'`, `"logged_at" >= TIMESTAMP '2026-03-30'`];
  const all = ['"decision_id"', '"region"', '"device"', '"tenure"', '"promotion"', '"propensity"', '"ordered"', '"basket_value"', '"policy_version"'];

  it.each([
    [['"logged_at"', ...all], 3],
    [['"ordered"', '"decision_id"', '"logged_at"'], 4],
    [['"basket_value"', '"decision_id"', '"logged_at"'], 2],
  ])('pick the same rows as numbering every match (order %s, %i per finding), from Parquet and CSV', async (order, n) => {
    const requests = wheres.map((where) => ({ where }));
    const parquet = `read_parquet('${SAMPLE}maple-row-demo.parquet')`;
    const b = await engine.query(reference(parquet, wheres, n, order));
    expect(b.rowCount).toBeGreaterThan(4);
    for (const reread of [true, false]) expect(await engine.query(examplesSql(parquet, requests, n, order, reread))).toEqual(b);
    const csv = `read_csv('${SAMPLE}maple-row-demo.csv')`;
    expect(await engine.query(examplesSql(csv, requests, n, order, false))).toEqual(await engine.query(reference(csv, wheres, n, order)));
  });
});

describe.each([
  ['the demo log', `read_parquet('${SAMPLE}maple-row-demo.parquet')`],
  ['a log with invalid propensities, NaN, null and -0.0 rewards', 'odd_finite'],
])('rewards grouped first (%s)', (_name, relation) => {
  it('give the exact row-level sums to the bit: Σ rows·round(d·2^s) is the same integer as Σ round(d·2^s)', async () => {
    const cols = parseDescribe(await engine.query(describeSql(relation)));
    const profile = parseProfile(await engine.query(profileSql(relation, cols)), cols);
    const roles = resolveRoles(profile, { segments: ['region', 'device', 'tenure'], action: 'promotion', propensity: 'propensity', reward: 'ordered', time: 'logged_at' });
    const rows = rowExpressions(roles, profile, chooseBuckets(timeRangeUs(roles, profile), 'auto', 60));
    const rewardProfile = profile.columns.find((c) => c.name === 'ordered');
    const reward = rewardShift(rewardProfile);
    expect(reward).not.toBeNull();
    expect(groupsByReward(rewardProfile)).toBe(true);
    for (const capped of [[], [0]]) {
      const cube = (byReward: boolean) => engine.query(cubeSql({ relation, rows, capped, cap: 1, floor: 0.01, byPropensity: true, byReward, reward, rowCount: profile.rows })).then((t) => parseCube(t, 3));
      const [rowLevel, grouped] = [await cube(false), await cube(true)];
      expect(rowLevel.length).toBeGreaterThan(capped.length ? 1 : 10);
      expect(firstDifference(grouped, rowLevel, 0)).toBeNull();
      expect(JSON.stringify(grouped)).toBe(JSON.stringify(rowLevel));
    }
  });
});

describe('duplicated decision ids', () => {
  // The plain form: group every id and keep those held by more than one row.
  const reference = (relation: string, id: string) => `WITH counts AS (SELECT CAST(${id} AS VARCHAR) AS id, count(*) AS c FROM ${relation} WHERE ${id} IS NOT NULL GROUP BY 1 HAVING count(*) > 1)
    SELECT count(*)::DOUBLE AS ids, coalesce(sum(c), 0)::DOUBLE AS rows_in_duplicates, coalesce(max(c), 0)::DOUBLE AS max_copies, list_sort(list(id))[1:5] AS example_ids FROM counts`;

  it.each([
    ['text ids with pairs, a triple, nulls', `SELECT CASE WHEN i % 97 = 0 THEN NULL ELSE 'd-' || (i % 4000)::VARCHAR END AS id FROM range(4100) t(i) UNION ALL SELECT 'd-7' FROM range(2)`],
    ['integer ids, one held five times', `SELECT (i % 3000) AS id FROM range(3000) t(i) UNION ALL SELECT 17 FROM range(4)`],
    ['double ids where 0.0 and -0.0 print differently', `SELECT x AS id FROM (VALUES (0.0::DOUBLE), ('-0.0'::DOUBLE), (0.0::DOUBLE), ('NaN'::DOUBLE), ('NaN'::DOUBLE), (1.5)) v(x)`],
    ['no duplicates at all', `SELECT i AS id FROM range(500) t(i)`],
  ])('count the same as grouping every id: %s', async (_name, select) => {
    const relation = `(${select})`;
    const sorted = parseDuplicates(await engine.query(duplicatesSql(relation, 'id', 5)));
    const grouped = parseDuplicates(await engine.query(reference(relation, '"id"')));
    expect(sorted).toEqual(grouped);
    // a hash of 3 bits makes nearly every id collide with others: the exact second pass must drop them all
    const colliding = parseDuplicates(await engine.query(duplicatesSql(relation, 'id', 5, { ...duckdb, hash64: (x) => `(hash(${x}) % 8)` })));
    expect(colliding).toEqual(grouped);
    // both widths: 32 bits for a row count the profile gives, 64 when it gives none
    for (const rowCount of [4000, 2 ** 27, 2 ** 30, undefined]) expect(parseDuplicates(await engine.query(duplicatesSql(relation, 'id', 5, duckdb, rowCount)))).toEqual(grouped);
  });

  it('the partitions follow the row count: one 32-bit sort up to 2^26 rows, partitions of at most 2^26 rows above, one 64-bit sort when the count is not known', () => {
    const counts = [10_030_000, 2 ** 26, 2 ** 26 + 1, 100_300_000, 2 ** 28, 2 ** 28 + 1, 2 ** 40, undefined];
    expect(counts.map(duplicatesPartitions)).toEqual([1, 1, 2, 2, 4, 8, 256, null]);
    // one UNION ALL branch (one sort) per partition
    expect(duplicatesSql('t', 'id', 5, duckdb, 100_300_000).match(/lag\(/g)).toHaveLength(2);
    expect(duplicatesSql('t', 'id', 5, duckdb, 2 ** 28).match(/lag\(/g)).toHaveLength(4);
  });

  it('partitioned: count exactly where distinct ids share the low 32 bits of the hash, in one partition and in two (real collisions of DuckDB hash(), found among 300,000 ids)', async () => {
    // 300,000 distinct ids share about 300000²/2^33 ≈ 10 pairs of low 32 bits (birthday bound); with 2 partitions (the
    // top bit) a pair falls in one partition half the time. Duplicates are planted on every 7,919th id and on one id of
    // each pair, and the row count given makes duplicatesSql partition these 300,000 rows as it would a larger log's.
    await engine.query(`CREATE OR REPLACE TEMP TABLE idsLow AS SELECT 'u-' || i::VARCHAR AS id, hash('u-' || i::VARCHAR) AS h FROM range(300000) t(i)`);
    const pairs = await engine.query(`SELECT min(id) AS id, count(DISTINCT h >> 63) AS partitions, count(DISTINCT h >> 62) AS quarters FROM idsLow GROUP BY h & 4294967295 HAVING count(*) > 1`);
    const partitions = pairs.columns[1] as readonly unknown[];
    const quarters = pairs.columns[2] as readonly unknown[];
    expect(partitions.filter((n) => Number(n) === 1).length).toBeGreaterThan(0);
    expect(partitions.filter((n) => Number(n) === 2).length).toBeGreaterThan(0);
    expect(quarters.filter((n) => Number(n) === 1).length).toBeGreaterThan(0);
    const relation = `(SELECT id FROM idsLow UNION ALL SELECT id FROM idsLow WHERE hash(id) % 7919 = 0 UNION ALL SELECT min(id) FROM idsLow GROUP BY h & 4294967295 HAVING count(*) > 1 UNION ALL SELECT 'u-5' FROM range(3))`;
    const grouped = parseDuplicates(await engine.query(reference(relation, '"id"')));
    expect(grouped.ids).toBeGreaterThan(pairs.rowCount);
    expect(grouped.maxCopies).toBe(4);
    for (const rowCount of [2 ** 26 + 1, 2 ** 28]) expect(parseDuplicates(await engine.query(duplicatesSql(relation, 'id', 5, duckdb, rowCount)))).toEqual(grouped);
    // a 3-bit hash puts every id in partition 0 and makes nearly all collide: still exact
    expect(parseDuplicates(await engine.query(duplicatesSql(relation, 'id', 5, { ...duckdb, hash64: (x) => `(hash(${x}) % 8)` }, 2 ** 28)))).toEqual(grouped);
  });

  it('count exactly where distinct ids share a 32-bit hash (real collisions of DuckDB hash(), found among 300,000 ids)', async () => {
    // 300,000 distinct ids share about 300000²/2^33 ≈ 10 pairs of 32-bit hashes (birthday bound); duplicates are planted
    // on every 7,919th id and on one id of each colliding pair, so the exact second pass must separate them
    await engine.query(`CREATE OR REPLACE TEMP TABLE ids32 AS SELECT 'u-' || i::VARCHAR AS id, CAST(hash('u-' || i::VARCHAR) >> 32 AS UINTEGER) AS h FROM range(300000) t(i)`);
    const pairs = await engine.query(`SELECT min(id) AS id FROM ids32 GROUP BY h HAVING count(*) > 1`);
    expect(pairs.rowCount).toBeGreaterThan(0);
    const relation = `(SELECT id FROM ids32 UNION ALL SELECT id FROM ids32 WHERE hash(id) % 7919 = 0 UNION ALL SELECT min(id) FROM ids32 GROUP BY h HAVING count(*) > 1 UNION ALL SELECT 'u-5' FROM range(3))`;
    const grouped = parseDuplicates(await engine.query(reference(relation, '"id"')));
    expect(grouped.ids).toBeGreaterThan(pairs.rowCount);
    expect(grouped.maxCopies).toBe(4);
    for (const rowCount of [300_000, undefined]) expect(parseDuplicates(await engine.query(duplicatesSql(relation, 'id', 5, duckdb, rowCount)))).toEqual(grouped);
  });
});

describe.each([
  ['the demo log', `read_parquet('${SAMPLE}maple-row-demo.parquet')`],
  ['a log with invalid propensities, NaN, null, infinite and -0.0 rewards', 'odd_finite'],
  ['a log with invalid propensities and infinite rewards', 'odd'],
])('clip rows (%s)', (_name, relation) => {
  let fetched: Awaited<ReturnType<typeof engine.query>> | undefined;
  // The plain form, computed here rather than in SQL: every row's weight q(s, a) / p, the rows above the bound, weight descending, reward ascending, no reward last.
  async function byHand(target: TargetPolicy, actions: readonly string[], above: number, limit: number) {
    const t = (fetched ??= await engine.query(`SELECT coalesce(region, '(null)'), coalesce(device, '(null)'), coalesce(tenure, '(null)'), coalesce(promotion, '(null)'), TRY_CAST(propensity AS DOUBLE), TRY_CAST(ordered AS DOUBLE) FROM ${relation}`));
    const [region, device, tenure, action, p, r] = t.columns as unknown as [string[], string[], string[], string[], (number | null)[], (number | null)[]];
    const segs: Record<string, string[]> = { region, device, tenure };
    const out: { w: number; r: number | null }[] = [];
    for (let i = 0; i < t.rowCount; i++) {
      const pi = p[i] as number | null;
      if (pi === null || !(pi > 0 && pi <= 1)) continue;
      const a = action[i] as string;
      let q = 0;
      if (target.kind === 'uniform') q = actions.includes(a) ? 1 / actions.length : 0;
      else if (target.kind === 'table') q = target.probabilities.get(target.keyColumns.map((c) => (segs[c] as string[])[i]).join(SEP))?.get(a) ?? 0;
      const w = q / pi;
      const ri = r[i] as number | null;
      // DuckDB's ORDER BY hands a sort key back as its normalised value, -0.0 as 0.0 (the statement has always done so)
      if (w > above && Number.isFinite(w)) out.push({ w, r: ri !== null && Number.isFinite(ri) ? ri + 0 : null });
    }
    return canonical(out).slice(0, limit);
  }
  const canonical = (rows: { w: number; r: number | null }[]) => [...rows].sort((x, y) => y.w - x.w || (x.r === null ? (y.r === null ? 0 : 1) : y.r === null ? -1 : x.r - y.r));

  it('list the same rows as weighing every row by hand, with the propensity bound applied and without it', async () => {
    const cols = parseDescribe(await engine.query(describeSql(relation)));
    const profile = parseProfile(await engine.query(profileSql(relation, cols)), cols);
    const roles = resolveRoles(profile, { segments: ['region', 'device', 'tenure'], action: 'promotion', propensity: 'propensity', reward: 'ordered', time: 'logged_at' });
    const rows = rowExpressions(roles, profile, chooseBuckets(timeRangeUs(roles, profile), 'auto', 60));
    const ctx = { actionColumn: 'promotion', logColumns: cols.map((c) => c.name), targetColumn: null };
    const actions = ['bakery', 'household', 'recipe-kit'];
    let bounded = 0;
    for (const target of [parseTarget({ spec: `table:${V9}`, tableText: readFileSync(V9, 'utf8') }, ctx), parseTarget({ spec: 'uniform' }, ctx)]) {
      const tail = parseTail(await engine.query(tailSql(relation, rows, target, ['region', 'device', 'tenure'], actions, 300)));
      expect(tail.weights.length).toBeGreaterThan(10);
      // above: a weight inside the tail (weights tie, so one of the distinct ones), the tail's smallest, and 0 (every positive weight)
      const distinct = [...new Set(tail.weights)];
      for (const above of [distinct[Math.min(5, distinct.length - 1)] as number, tail.weights[tail.weights.length - 1] as number, 0]) {
        // a limit no answer reaches: the audit's own (the tail's length) never cuts into the rows above its bound
        const expected = await byHand(target, actions, above, 1e6);
        if (above === 0) expect(expected.length).toBeGreaterThan(tail.weights.length / 2);
        const listed = parseClipRows(await engine.query(clipRowsSql(relation, rows, target, ['region', 'device', 'tenure'], actions, above, 1e6)));
        expect(canonical(listed)).toEqual(expected);
        if (clipPropensityBound(target, actions, above) !== null && expected.length > 0) bounded++;
      }
    }
    expect(bounded).toBeGreaterThan(0);
  });
});

describe.each([
  ['the demo log', `read_parquet('${SAMPLE}maple-row-demo.parquet')`],
  ['a log with invalid propensities, NaN, null and -0.0 rewards', 'odd_finite'],
])('over a table of row groups (%s)', (_name, relation) => {
  it('the cube, the tails and the clip rows answer what they answer over the rows, to the bit', async () => {
    const cols = parseDescribe(await engine.query(describeSql(relation)));
    const profile = parseProfile(await engine.query(profileSql(relation, cols)), cols);
    const roles = resolveRoles(profile, { segments: ['region', 'device', 'tenure'], action: 'promotion', propensity: 'propensity', reward: 'ordered', time: 'logged_at' });
    const rows = rowExpressions(roles, profile, chooseBuckets(timeRangeUs(roles, profile), 'auto', 60));
    const reward = rewardShift(profile.columns.find((c) => c.name === 'ordered'));
    const base = { relation, rows, cap: 1, floor: 0.01, byPropensity: true, byReward: true, reward, rowCount: profile.rows };
    expect(cubeReadsGroups(base)).toBe(true);
    await engine.query('DROP TABLE IF EXISTS row_groups');
    await engine.query(`CREATE TEMP TABLE row_groups AS ${cubeGroupsSelect(base)}`);
    const g = await engine.query('SELECT count(*)::DOUBLE AS groups, sum(nr)::DOUBLE AS rows FROM row_groups');
    // fewer groups than rows (the point of the table), and every row in one
    expect(Number(g.columns[0]?.[0])).toBeLessThan(profile.rows);
    expect(Number(g.columns[1]?.[0])).toBe(profile.rows);
    for (const capped of [[], [0]]) {
      const cube = (groups?: string) => engine.query(cubeSql({ ...base, capped, ...(groups ? { groups } : {}) })).then((t) => parseCube(t, 3));
      const [overRows, overGroups] = [await cube(), await cube('row_groups')];
      expect(overRows.length).toBeGreaterThan(capped.length ? 1 : 10);
      expect(JSON.stringify(overGroups)).toBe(JSON.stringify(overRows));
    }
    const segs = ['region', 'device', 'tenure'];
    const actions = ['bakery', 'household', 'recipe-kit', 'produce-box', 'pantry-restock', 'free-delivery', 'no-banner'];
    const targets = [
      parseTarget({ spec: `table:${V9}`, tableText: readFileSync(V9, 'utf8') }, { actionColumn: 'promotion', logColumns: cols.map((c) => c.name), targetColumn: null }),
      parseTarget({ spec: 'uniform' }, { actionColumn: 'promotion', logColumns: cols.map((c) => c.name), targetColumn: null }),
    ];
    for (const target of targets) {
      for (const limit of [1, 40, 100_000]) {
        const overRows = parseTail(await engine.query(tailSql(relation, rows, target, segs, actions, limit, true)));
        expect(overRows.weights.length).toBeGreaterThan(0);
        expect(JSON.stringify(parseTail(await engine.query(tailSql('row_groups', groupRows(rows), target, segs, actions, limit, true, 'nr'))))).toBe(JSON.stringify(overRows));
        // above 0 (every positive weight, at most `limit`) and above the tail's smallest listed weight
        for (const above of [0, overRows.weights[overRows.weights.length - 1] as number]) {
          const clip = parseClipRows(await engine.query(clipRowsSql(relation, rows, target, segs, actions, above, limit)));
          expect(JSON.stringify(parseClipRows(await engine.query(clipRowsSql('row_groups', groupRows(rows), target, segs, actions, above, limit, 'nr'))))).toBe(JSON.stringify(clip));
        }
      }
    }
  });
});
