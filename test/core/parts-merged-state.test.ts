/**
 * The merged state of a parts folder (app/core/parts/merged.ts) against the replay of every part
 * (app/core/parts/merge.ts mergeGroups and copiesOf, which test/core/parts-merge.test.ts holds byte-equal to
 * DuckDB's audit of the whole log), on hand-made parts where the demo does not reach: the whole log's buckets
 * coarser than the stored ones (a log of more than 60 days under time.bucket auto), stored buckets widened
 * as parts arrive, and limb sums added to limb sums checked against BigInt arithmetic (exact by the language
 * specification, ECMA-262 BigInt).
 */
import { describe, expect, it } from 'vitest';
import { ExactSums } from '../../app/core/parts/exact.ts';
import { addDistincts, copiesOf, mergeGroups, weightGroupsOf, type PartGroups, type PartIds } from '../../app/core/parts/merge.ts';
import { addPartIds, addPartToCube, coarsened, cubeFromMerged, cubeOfParts } from '../../app/core/parts/merged.ts';
import { decodeMerged, encodeMerged } from '../../app/cli/merged-state.ts';
import type { Profile } from '../../app/core/scan/profile.ts';
import { scalesOf, type ReplaySpec, type RowGroups } from '../../app/core/parts/replay.ts';

const HOUR = 3_600_000_000;

/** A small deterministic generator (a 32-bit LCG, Numerical Recipes' constants), so the parts are the same every run. */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => (s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32;
}

/** One part of `hours` hours from `startHour` (hours since the epoch), rows grouped as scan.ts groups them, in buckets of `width` hours. */
function part(rand: () => number, startHour: number, hours: number, width: number): PartGroups {
  const g = { segments: [[], []] as string[][], action: [] as string[], version: [] as string[], bucket: [] as number[], p: [] as (number | null)[], r: [] as (number | null)[], rows: [] as number[] };
  const seen = new Map<string, number>();
  for (let k = 0; k < 400; k++) {
    const hour = startHour + Math.floor(rand() * hours);
    const keys = [rand() < 0.5 ? 'north' : 'south', rand() < 0.3 ? 'phone' : 'desk', rand() < 0.5 ? 'a' : 'b', rand() < 0.8 ? 'v1' : 'v2', String(Math.floor(hour / width))];
    const p = [0.1, 0.25, 0.5, 0.7][Math.floor(rand() * 4)] as number;
    const r = rand() < 0.1 ? null : rand() < 0.6 ? 0 : 1;
    const key = [...keys, p, r].join('|');
    const rows = 1 + Math.floor(rand() * 50);
    const at = seen.get(key);
    if (at !== undefined) { g.rows[at] = (g.rows[at] as number) + rows; continue; }
    seen.set(key, g.rows.length);
    g.segments[0]?.push(keys[0] as string);
    g.segments[1]?.push(keys[1] as string);
    g.action.push(keys[2] as string);
    g.version.push(keys[3] as string);
    g.bucket.push(Number(keys[4]));
    g.p.push(p);
    g.r.push(r);
    g.rows.push(rows);
  }
  return { groups: g as RowGroups, bucketUs: width * HOUR };
}

const rowsOf = (parts: readonly PartGroups[]) => parts.reduce((s, p) => s + p.groups.rows.reduce((a, b) => a + b, 0), 0);

describe('the merged cube equals the replay of every part', () => {
  const rand = lcg(20261203);
  const start = 490_008; // hours since the epoch: a whole number of days
  // early parts kept finer (1h), later ones in days, as storageWidth widens them for a growing log
  const parts = [part(rand, start, 24, 1), part(rand, start + 24, 24, 1), ...Array.from({ length: 6 }, (_, i) => part(rand, start + 48 + 24 * i, 24, 24))];
  const reward = { shift: 0.5, halfRange: 0.5 };
  const spec = (n: number): ReplaySpec => ({ reward, floor: 0.05, byPropensity: true, rowCount: n });
  const rows = rowsOf(parts);

  it('with the whole log in 7-day buckets over daily stored buckets (cells of several stored buckets meet), and capped', () => {
    const cube = cubeOfParts(parts, 24 * HOUR, scalesOf(spec(rows)));
    expect(cube).not.toBeNull();
    const buckets = { originUs: Math.floor((start * HOUR) / (168 * HOUR)) * 168 * HOUR, widthUs: 168 * HOUR, count: 2, label: '7d' };
    const merged = cubeFromMerged(cube!, buckets, spec(rows), [0], 1);
    const replayed = mergeGroups(parts, buckets, spec(rows), [0], 1);
    expect(merged).not.toBeNull();
    expect(merged!.cells.length).toBeGreaterThan(0);
    expect(JSON.stringify(merged!.cells)).toBe(JSON.stringify(replayed.cells));
    expect([...merged!.cappedDistinct]).toEqual([...replayed.cappedDistinct]);
  });

  it('added part by part, widened from hourly to daily storage, stored and read back, in daily buckets', () => {
    const scales = scalesOf(spec(rows));
    let cube = cubeOfParts(parts.slice(0, 2), HOUR, scales)!;
    cube = coarsened(cube, 24 * HOUR);
    for (const p of parts.slice(2)) expect(addPartToCube(cube, p)).toBe(true);
    // through the merged state file's bytes (app/cli/merged-state.ts), as a parts folder keeps it
    const g = parts[0]!.groups;
    cube = decodeMerged(encodeMerged({ parts: [], profile: {} as Profile, distincts: addDistincts(null, g), weights: weightGroupsOf(g), copies: null, cube, rebuiltAt: [1] }), 'merged-8.bin').cube!;
    const buckets = { originUs: start * HOUR, widthUs: 24 * HOUR, count: 8, label: '1d' };
    const merged = cubeFromMerged(cube, buckets, spec(rows), [], 50);
    expect(JSON.stringify(merged?.cells)).toBe(JSON.stringify(mergeGroups(parts, buckets, spec(rows), [], 50).cells));
  });

  it('refuses (null: the audit then replays the parts) other scales, hourly whole-log buckets over daily ones, or a log not grouped by propensity', () => {
    const cube = cubeOfParts(parts, 24 * HOUR, scalesOf(spec(rows)))!;
    const daily = { originUs: start * HOUR, widthUs: 24 * HOUR, count: 8, label: '1d' };
    expect(cubeFromMerged(cube, daily, spec(2 * rows + 1), [], 50)).toBeNull();
    expect(cubeFromMerged(cube, { ...daily, widthUs: HOUR, count: 192 }, spec(rows), [], 50)).toBeNull();
    expect(cubeFromMerged(cube, daily, { ...spec(rows), byPropensity: false }, [], 50)).toBeNull();
    // a part kept in buckets coarser than the cube's cannot be added (the cube is widened first); a finer one can
    expect(addPartToCube(cubeOfParts(parts.slice(0, 1), HOUR, scalesOf(spec(rows)))!, parts[5]!)).toBe(false);
    expect(addPartToCube(cubeOfParts(parts.slice(2, 3), 24 * HOUR, scalesOf(spec(rows)))!, parts[0]!)).toBe(true);
  });
});

describe('limb sums added to limb sums', () => {
  it('equal the BigInt sums, across carries and signs', () => {
    const rand = lcg(7);
    const a = new ExactSums(4);
    const b = new ExactSums(4);
    const ref = [0n, 0n, 0n, 0n];
    for (let k = 0; k < 2000; k++) {
      const i = k % 4;
      const t = Math.round((rand() - 0.4) * 2 ** 52) * 2 ** Math.floor(rand() * 70);
      const w = 1 + Math.floor(rand() * 2 ** 25);
      (k % 3 ? a : b).add(i, t, w);
      ref[i] = (ref[i] as bigint) + BigInt(t) * BigInt(w);
    }
    for (let i = 0; i < 4; i++) a.addSum(i, b, i);
    expect([0, 1, 2, 3].map((i) => a.bigint(i))).toEqual(ref);
  });
});

describe('ids added part by part', () => {
  const ids = (entries: [bigint, string, number][]): PartIds => {
    const hashes = [...new Set(entries.map((e) => e[0]))].sort((x, y) => (x < y ? -1 : 1));
    return {
      hashes: BigUint64Array.from(hashes),
      repeated: new Map(entries.filter((e) => e[2] > 1).map((e) => [e[1], e[2]])),
      idsAt: (i) => entries.filter((e) => e[0] === hashes[i]).map((e) => [e[1], e[2]] as const),
    };
  };
  it('give the ids held by more than one row that every part at once gives (collisions, ids in three parts, hashes above 2^63)', () => {
    const big = 2n ** 63n + 5n;
    const parts = [
      ids([[1n, 'x', 1], [7n, 'same', 1], [9n, 'twice', 2], [big, 'high', 1]]),
      ids([[1n, 'y', 1], [7n, 'same', 3], [8n, 'z', 1], [big, 'high', 1], [2n ** 32n + 7n, 'w', 1]]),
      ids([[7n, 'same', 1], [9n, 'twice', 1], [7n, 'other', 1], [2n ** 32n + 7n, 'w', 2]]),
    ];
    const copies = new Map<string, number>();
    parts.forEach((p, i) => addPartIds(copies, parts.slice(0, i).map((e) => () => e), p));
    const whole = copiesOf(parts);
    expect(new Map([...copies].sort())).toEqual(new Map([...whole].sort()));
    expect(whole.get('same')).toBe(5);
    expect(whole.get('twice')).toBe(3);
    expect(whole.get('high')).toBe(2);
    expect(whole.get('w')).toBe(3);
    expect(whole.has('x')).toBe(false);
  });
});
