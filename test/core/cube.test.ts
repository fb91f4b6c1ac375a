/**
 * The cube SQL, checked twice (text where it matters, and DuckDB's answer): every sufficient statistic
 * of a small log equals the same sum computed row by row in plain TypeScript over the rows written here.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cubeSql, parseCube } from '../../app/core/scan/cube.ts';
import { chooseBuckets, rowExpressions } from '../../app/core/scan/expressions.ts';
import { describeSql, parseDescribe, parseProfile, profileSql } from '../../app/core/scan/profile.ts';
import { resolveRoles } from '../../app/core/roles/roles.ts';
import { total } from '../../app/core/cube/rollup.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';

const ROWS: [string, string, string, number | null, number | null, string][] = [];
// region, promotion, timestamp, propensity, reward, tier — with invalid propensities and null rewards mixed in
for (let i = 0; i < 400; i++) {
  const p = i % 37 === 0 ? null : i % 41 === 0 ? 0 : i % 43 === 0 ? 1.5 : [0.1, 0.25, 0.5, 1, 0.005][i % 5]!;
  const r = i % 29 === 0 ? null : (i * 7919) % 11 < 4 ? 1 : 0;
  ROWS.push([['north', 'south', 'east'][i % 3]!, ['a', 'b', 'c', 'd'][(i * 3) % 4]!, `2026-01-0${1 + (i % 5)} ${String(i % 24).padStart(2, '0')}:00:00`, p, r, `t${i % 60}`]);
}

let engine: Engine;
beforeAll(async () => {
  engine = await createNativeEngine();
  const values = ROWS.map(([s, a, t, p, r, k]) => `('${s}', '${a}', TIMESTAMP '${t}', ${p === null ? 'NULL' : p}, ${r === null ? 'NULL' : r}, '${k}')`).join(',');
  await engine.query(`CREATE TABLE log AS SELECT * FROM (VALUES ${values}) v(region, promotion, logged_at, propensity, ordered, tier)`);
});
afterAll(async () => engine?.close());

async function cubeFor(cap: number) {
  const cols = parseDescribe(await engine.query(describeSql('log')));
  const profile = parseProfile(await engine.query(profileSql('log', cols)), cols);
  const roles = resolveRoles(profile, { segments: ['region', 'tier'], action: 'promotion', propensity: 'propensity', reward: 'ordered', time: 'logged_at' });
  const buckets = chooseBuckets([profile.columns[2]!.minTimeUs!, profile.columns[2]!.maxTimeUs!], '1d', 60);
  const rows = rowExpressions(roles, profile, buckets);
  const sql = cubeSql({ relation: 'log', rows, capped: cap < 60 ? [1] : [], cap, floor: 0.01 });
  return { sql, cells: parseCube(await engine.query(sql), 2), buckets };
}

describe('cube', () => {
  it('equals row-by-row sums for every statistic', async () => {
    const { cells, buckets } = await cubeFor(100);
    expect(buckets!.count).toBe(5);
    const valid = (p: number | null): p is number => p !== null && p > 0 && p <= 1;
    const sum = (f: (r: (typeof ROWS)[number]) => number) => ROWS.reduce((s, r) => s + f(r), 0);
    const t = total(cells);
    expect(t.n).toBe(ROWS.length);
    expect(t.nPNull).toBe(sum((r) => (r[3] === null ? 1 : 0)));
    expect(t.nPNonPositive).toBe(sum((r) => (r[3] === 0 ? 1 : 0)));
    expect(t.nPAboveOne).toBe(sum((r) => (r[3] !== null && r[3] > 1 ? 1 : 0)));
    expect(t.nPOne).toBe(sum((r) => (r[3] === 1 ? 1 : 0)));
    expect(t.nPBelowFloor).toBe(sum((r) => (valid(r[3]) && r[3] < 0.01 ? 1 : 0)));
    expect(t.nRNull).toBe(sum((r) => (r[4] === null ? 1 : 0)));
    expect(t.sumInvP).toBeCloseTo(sum((r) => (valid(r[3]) ? 1 / r[3] : 0)), 9);
    expect(t.sumInvP2).toBeCloseTo(sum((r) => (valid(r[3]) ? 1 / r[3] ** 2 : 0)), 6);
    const rw = (r: (typeof ROWS)[number]) => valid(r[3]) && r[4] !== null;
    expect(t.nRw).toBe(sum((r) => (rw(r) ? 1 : 0)));
    expect(t.sumRInvP).toBeCloseTo(sum((r) => (rw(r) ? r[4]! / r[3]! : 0)), 9);
    expect(t.sumR2InvP2).toBeCloseTo(sum((r) => (rw(r) ? r[4]! ** 2 / r[3]! ** 2 : 0)), 6);
    expect(t.sumRAll).toBe(sum((r) => r[4] ?? 0));
    expect(t.minP).toBe(0.005);
    const north = cells.filter((c) => c.segment[0] === 'north' && c.action === 'a' && c.bucket === 0);
    const rowsNorth = ROWS.filter((r) => r[0] === 'north' && r[1] === 'a' && r[2].startsWith('2026-01-01'));
    expect(north.reduce((s, c) => s + c.n, 0)).toBe(rowsNorth.length);
  });

  it('caps a segment column at its most frequent values and merges the rest into "(other)" exactly', async () => {
    const full = await cubeFor(100);
    const capped = await cubeFor(10);
    expect(new Set(capped.cells.map((c) => c.segment[1])).size).toBe(11);
    expect(capped.cells.some((c) => c.segment[1] === '(other)')).toBe(true);
    const a = total(full.cells);
    const b = total(capped.cells);
    expect(b.n).toBe(a.n);
    expect(b.sumInvP).toBeCloseTo(a.sumInvP, 9);
    expect(b.minP).toBe(a.minP);
    expect(capped.sql).toContain('ORDER BY sum(n) DESC');
  });

  it('reads the log once: one SELECT over the source', async () => {
    const { sql } = await cubeFor(10);
    expect(sql.match(/FROM log\b/g)).toHaveLength(1);
  });
});
