/**
 * The merged state of a parts folder (README, "Audits merged from parts"): what the audit of every part so far
 * needs, kept so that adding a part reads only the new part and this state, not every part again:
 *   - the merged profile, and the distinct segment values and propensities over all rows (withDistincts);
 *   - the weight groups of all parts merged (counts add: tails and clip rows depend only on the counts);
 *   - the ids held by more than one row so far, with their rows (a new part's ids are compared with the earlier
 *     parts' only where a hash is shared, exactly, as duplicatesOf does);
 *   - the cube's by_p entries (replay.ts, Entries) in the parts' storage buckets, with their exact Σd, Σd² at the
 *     literal scales of the log so far. Those scales follow the log's rows (2^floor(124 − log2(rows + 1) − …))
 *     and the reward's range: when a new part moves them (the rows cross a power of two, the reward's range
 *     grows) or widens the storage buckets, the entries are formed again from every part's stored groups
 *     (rebuiltAt records when). An audit uses the entries only at its own scales and when every sum it forms
 *     is exact (then the order in which entries were added cannot matter); otherwise it replays the parts.
 * Pure: app/cli/parts.ts reads and writes the folder.
 */
import type { Profile } from '../scan/profile.ts';
import type { TimeBuckets } from '../scan/expressions.ts';
import type { CubeCell } from '../cube/types.ts';
import { SEP } from '../cube/rollup.ts';
import { cellKey, Entries, finishEntries, scalesOf, type CellKeys, type EntryScales, type ReplaySpec } from './replay.ts';
import { capCells, cellOrder, type PartGroups, type PartIds, type WeightGroups } from './merge.ts';

/** Weight groups of several parts as one: groups with the same (segment values, action, p, r) add their rows. */
export function addWeightGroups(into: WeightGroups | null, add: WeightGroups): WeightGroups {
  const segments = (into?.segments ?? add.segments.map(() => [])).map((s) => s.slice());
  const action = into?.action.slice() ?? [];
  const p = into?.p.slice() ?? [];
  const r = into?.r.slice() ?? [];
  const rows = into?.rows.slice() ?? [];
  const key = (g: WeightGroups, i: number) => `${g.segments.map((s) => s[i]).join(SEP)}${SEP}${g.action[i]}${SEP}${g.p[i]}${SEP}${g.r[i]}`;
  const at = new Map<string, number>();
  if (into) for (let i = 0; i < into.rows.length; i++) at.set(key(into, i), i);
  for (let i = 0; i < add.rows.length; i++) {
    const k = key(add, i);
    const j = at.get(k);
    if (j !== undefined) { rows[j] = (rows[j] as number) + (add.rows[i] as number); continue; }
    at.set(k, rows.length);
    add.segments.forEach((s, m) => segments[m]?.push(s[i] as string));
    action.push(add.action[i] as string);
    p.push(add.p[i] as number);
    r.push(add.r[i] ?? null);
    rows.push(add.rows[i] as number);
  }
  return { segments, action, p, r, rows };
}

/** Positions (in a, in b) of the hashes two ascending hash lists share, compared as two 32-bit halves (little-endian). */
function sharedHashes(a: BigUint64Array, b: BigUint64Array): [number, number][] {
  const ua = new Uint32Array(a.buffer, a.byteOffset, a.length * 2);
  const ub = new Uint32Array(b.buffer, b.byteOffset, b.length * 2);
  const out: [number, number][] = [];
  let i = 0;
  let j = 0;
  while (i < a.length && j < b.length) {
    const ha = ua[2 * i + 1] as number;
    const hb = ub[2 * j + 1] as number;
    const d = ha !== hb ? ha - hb : (ua[2 * i] as number) - (ub[2 * j] as number);
    if (d === 0) out.push([i++, j++]);
    else if (d < 0) i++;
    else j++;
  }
  return out;
}

/**
 * Adds a part's ids to the ids held by more than one row so far (`copies`, id → rows): its ids repeated within it,
 * then, for each hash it shares with an earlier part, every id of that hash counted over all parts holding it,
 * exactly (duplicatesOf over all parts gives the same ids and rows).
 */
export function addPartIds(copies: Map<string, number>, earlier: readonly (() => PartIds)[], part: PartIds): void {
  for (const [id, n] of part.repeated) copies.set(id, n);
  const seen = new Map<number, Map<string, number>>();
  const count = (at: Map<string, number>, ids: readonly (readonly [string, number])[]) => { for (const [id, n] of ids) at.set(id, (at.get(id) ?? 0) + n); };
  for (const open of earlier) {
    const e = open();
    for (const [k, j] of sharedHashes(e.hashes, part.hashes)) {
      let at = seen.get(j);
      if (!at) seen.set(j, (at = new Map()));
      count(at, e.idsAt(k));
    }
  }
  for (const [j, at] of seen) {
    count(at, part.idsAt(j));
    for (const [id, n] of at) if (n > 1) copies.set(id, n);
  }
}

/** The cube's by_p entries of the parts so far, in storage buckets of `width` from the epoch, at `scales`. */
export interface MergedCube {
  readonly width: number;
  readonly entries: Entries;
}

/** The scales the whole log so far would use (replay.ts scalesOf), from its merged profile; null without a finite reward range. */
export function cubeScales(profile: Profile, reward: ReplaySpec['reward']): EntryScales | null {
  const s = scalesOf({ reward, rowCount: profile.rows });
  return s.k1 === null || s.k2 === null ? null : s;
}

/** Adds one part's row groups to the entries (only the cells in the part's buckets are keyed); false if the part's buckets do not divide `width`. */
export function addPartToCube(cube: MergedCube, part: PartGroups): boolean {
  const W = cube.width;
  const w = part.bucketUs;
  if (W % w !== 0) return false;
  const g = part.groups;
  const buckets = new Set<number>();
  const bucketOf = (b0: number) => (b0 < 0 ? -1 : Math.floor((b0 * w) / W));
  for (const b of g.bucket) buckets.add(bucketOf(b));
  cube.entries.index((k) => buckets.has(k.bucket));
  for (let i = 0; i < g.rows.length; i++) {
    const keys: CellKeys = { segment: g.segments.map((s) => s[i] as string), action: g.action[i] as string, version: g.version[i] as string, bucket: bucketOf(g.bucket[i] as number) };
    cube.entries.addGroup(keys, g.p[i] ?? null, g.r[i] ?? null, g.rows[i] as number);
  }
  return true;
}

/** The entries in coarser storage buckets of `width` (a multiple of the cube's): entries falling into one bucket add. */
export function coarsened(cube: MergedCube, width: number): MergedCube {
  const W = cube.width;
  const stored = cube.entries;
  const next = new Entries(stored.scales);
  const mapped = stored.cells.map((k) => {
    const keys: CellKeys = { ...k, bucket: k.bucket < 0 ? -1 : Math.floor((k.bucket * W) / width) };
    return { keys, key: cellKey(keys) };
  });
  for (let e = 0; e < stored.length; e++) {
    const m = mapped[stored.cell[e] as number] as (typeof mapped)[number];
    next.addEntry(m.keys, stored, e, m.key);
  }
  return { width, entries: next };
}

export const sameScales = (a: EntryScales, b: EntryScales) => Object.is(a.shift, b.shift) && a.k1 === b.k1 && a.k2 === b.k2;

/** The entries of every part, formed again at new scales or a new width; null if a part's buckets do not divide `width`. */
export function cubeOfParts(parts: readonly PartGroups[], width: number, scales: EntryScales): MergedCube | null {
  const cube: MergedCube = { width, entries: new Entries(scales) };
  for (const p of parts) if (!addPartToCube(cube, p)) return null;
  return cube;
}

/**
 * The whole log's cube from the merged entries (mergeGroups' answer, to the bit), or null where they cannot give
 * it: the audit groups rows by propensity at the entries' scales, the whole log's buckets are unions of the storage
 * buckets, no row count reached the BigInt part, and every fixed-point sum has a scale.
 */
export function cubeFromMerged(cube: MergedCube, buckets: TimeBuckets | null, spec: ReplaySpec, capped: readonly number[], cap: number): { cells: CubeCell[]; cappedDistinct: Map<number, number> } | null {
  const scales = scalesOf(spec);
  if (!spec.byPropensity || !sameScales(scales, cube.entries.scales) || cube.entries.sums.hasBig()) return null;
  const W = cube.width;
  if (buckets && (buckets.widthUs % W !== 0 || buckets.originUs % W !== 0)) return null;
  const stored = cube.entries;
  const mapped = stored.cells.map((k): CellKeys => ({ segment: k.segment, action: k.action, version: k.version, bucket: k.bucket < 0 ? -1 : buckets ? Math.floor((k.bucket * W - buckets.originUs) / buckets.widthUs) : 0 }));
  let whole: Entries;
  if (buckets && buckets.widthUs === W) whole = stored.relabelled(mapped); // b -> b - origin/W: no two storage cells meet
  else {
    whole = new Entries(scales);
    for (let e = 0; e < stored.length; e++) {
      const keys = mapped[stored.cell[e] as number] as CellKeys;
      whole.addEntry(keys, stored, e);
    }
  }
  const raw = finishEntries(whole, spec, cellOrder);
  if (!raw.exact) return null;
  return capCells(raw.cells, spec, capped, cap);
}
