/**
 * Audits merged from parts (README, "Audits merged from parts"): a partitioned log (one file per day, say)
 * is read part by part, each part's scan results are kept, and the audit of the whole log is made from them
 * without reading the earlier parts again. What each part keeps, and how parts merge:
 *   - its profile: counts add, minima and maxima combine (mergeProfiles);
 *   - its cube cells, uncapped, in buckets from the epoch no wider than the merged log's (scan.ts storageWidth): re-bucketed into the whole log's buckets,
 *     centred sums moved to the whole log's shift, merged (sums add, minima and maxima combine), then capped
 *     as the cube query caps (mergeCells);
 *   - its weight groups (segment values, action, p, finite r or null, rows): every target's largest weights,
 *     histogram and clip rows follow from them exactly, whatever the whole log's tail length (tailOf, clipOf);
 *   - its decision ids grouped exactly with their 64-bit hashes, sorted by hash: ids shared by two parts have
 *     equal hashes, so only hashes held by more than one part have their ids compared (duplicatesOf).
 * Pure: the part files are read and written by app/cli/parts.ts.
 */
import { addInto, emptyTotals, SEP } from '../cube/rollup.ts';
import type { CubeCell } from '../cube/types.ts';
import { blankCell } from '../cube/measures.ts';
import type { ColumnProfile, Profile } from '../scan/profile.ts';
import { NULL_LABEL, OTHER_LABEL, type TimeBuckets } from '../scan/expressions.ts';
import { LOG10_BIN, type Duplicates, type TailResult } from '../scan/rows.ts';
import type { TargetPolicy } from '../targets/targets.ts';

export const HOUR_US = 3_600_000_000;


export class PartsError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'PartsError';
  }
}

const sumOrNull = (a: number | null, b: number | null, pick: (x: number, y: number) => number): number | null => (a === null ? b : b === null ? a : pick(a, b));

/** The profile of the parts together. Distinct counts cannot be added: a part's count is a lower bound for the whole (basis 'first rows'). */
export function mergeProfiles(parts: readonly Profile[]): Profile {
  const first = parts[0];
  if (!first) throw new PartsError('no parts to merge');
  for (const p of parts) {
    const a = p.columns.map((c) => `${c.name} ${c.type}`).join(', ');
    const b = first.columns.map((c) => `${c.name} ${c.type}`).join(', ');
    if (a !== b) throw new PartsError(`the parts do not have the same columns: (${b}) against (${a})`);
  }
  const rows = parts.reduce((s, p) => s + p.rows, 0);
  const columns = first.columns.map((c0, j): ColumnProfile => {
    const cs = parts.map((p) => p.columns[j] as ColumnProfile);
    const add = (f: (c: ColumnProfile) => number) => cs.reduce((s, c) => s + f(c), 0);
    const comb = (f: (c: ColumnProfile) => number | null, pick: (x: number, y: number) => number) => cs.reduce<number | null>((s, c) => sumOrNull(s, f(c), pick), null);
    const distinct = Math.max(...cs.map((c) => c.distinct));
    return {
      ...c0,
      nonNull: add((c) => c.nonNull),
      distinct,
      distinctBasis: parts.length === 1 ? c0.distinctBasis : 'first rows',
      distinctRows: parts.length === 1 ? c0.distinctRows : Math.max(...cs.map((c) => c.distinctRows)),
      min: comb((c) => c.min, Math.min),
      max: comb((c) => c.max, Math.max),
      nan: add((c) => c.nan),
      infinite: add((c) => c.infinite),
      nonBinary: add((c) => c.nonBinary),
      nonInteger: add((c) => c.nonInteger),
      parsedAsNumber: add((c) => c.parsedAsNumber),
      parsedAsTime: add((c) => c.parsedAsTime),
      ...(c0.decimalComma !== undefined ? { decimalComma: add((c) => c.decimalComma ?? 0) } : {}),
      ...(c0.parseBasis !== undefined ? { parseBasis: cs.every((c) => c.parseBasis === 'all rows') ? 'all rows' as const : 'first rows' as const } : {}),
      minTimeUs: comb((c) => c.minTimeUs, Math.min),
      maxTimeUs: comb((c) => c.maxTimeUs, Math.max),
    };
  });
  return { rows, columns };
}

/** The profile with each segment column's distinct count exact over all rows, from the parts' uncapped cells. */
export function withSegmentDistincts(profile: Profile, segmentColumns: readonly string[], cells: readonly CubeCell[]): Profile {
  const values = segmentColumns.map(() => new Set<string>());
  for (const c of cells) c.segment.forEach((v, i) => { if (v !== NULL_LABEL) values[i]?.add(v); });
  return {
    ...profile,
    columns: profile.columns.map((c) => {
      const i = segmentColumns.indexOf(c.name);
      return i < 0 ? c : { ...c, distinct: values[i]?.size ?? 0, distinctBasis: 'all rows' as const, distinctRows: profile.rows };
    }),
  };
}

/** One part's cube: cells uncapped, in buckets of `bucketUs` from the epoch, with the reward shift its centred sums were taken about. */
export interface PartCube {
  readonly cells: readonly CubeCell[];
  readonly shift: number;
  readonly bucketUs: number;
}

/** A cell's centred sums moved from shift `from` to shift `to`: Σ(d+δ) = Σd + δn, Σ(d+δ)² = Σd² + 2δΣd + δ²n. */
function reshift(c: CubeCell, from: number, to: number): CubeCell {
  const delta = from - to;
  if (delta === 0) return c;
  return {
    ...c,
    sumD: c.sumD + delta * c.nRw,
    sumD2: c.sumD2 + 2 * delta * c.sumD + delta * delta * c.nRw,
    // the same moves weighted by 1/p and 1/p² over the same rewarded rows
    sumDInvP: c.sumDInvP + delta * c.sumInvPRw,
    sumDInvP2: c.sumDInvP2 + delta * c.sumInvP2Rw,
    sumD2InvP: c.sumD2InvP + 2 * delta * c.sumDInvP + delta * delta * c.sumInvPRw,
    sumD2InvP2: c.sumD2InvP2 + 2 * delta * c.sumDInvP2 + delta * delta * c.sumInvP2Rw,
    sumDAll: c.sumDAll + delta * c.nRAll,
    sumD2All: c.sumD2All + 2 * delta * c.sumDAll + delta * delta * c.nRAll,
  };
}

const compareText = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

/** Cells sharing (segment, action, version, bucket) merged, in the cube query's order (ORDER BY s0…, a, v, b). */
function mergeByKey(cells: readonly CubeCell[]): CubeCell[] {
  const groups = new Map<string, { keys: CubeCell; totals: ReturnType<typeof emptyTotals> }>();
  for (const c of cells) {
    const k = `${c.segment.join(SEP)}${SEP}${c.action}${SEP}${c.version}${SEP}${c.bucket}`;
    const g = groups.get(k);
    if (g) g.totals = addInto(g.totals, c);
    else groups.set(k, { keys: c, totals: addInto(emptyTotals(c.target !== null), c) });
  }
  const out = [...groups.values()].map(({ keys, totals }) => {
    const cell = blankCell();
    Object.assign(cell, totals, { segment: keys.segment, action: keys.action, version: keys.version, bucket: keys.bucket });
    return cell as unknown as CubeCell;
  });
  return out.sort((a, b) => {
    for (let i = 0; i < a.segment.length; i++) {
      const d = compareText(a.segment[i] as string, b.segment[i] as string);
      if (d) return d;
    }
    return compareText(a.action, b.action) || compareText(a.version, b.version) || a.bucket - b.bucket;
  });
}

/**
 * The whole log's cube from its parts' cubes: each hour re-bucketed into `buckets` (the whole log's, from
 * the merged profile), centred sums moved to the whole log's shift, cells merged, and the `capped` segment
 * columns cut to their `cap` most frequent values as the cube query cuts them (rows descending, then the
 * value), the rest merged into "(other)". Returns the cells and each capped column's distinct count before capping.
 */
export function mergeCells(parts: readonly PartCube[], buckets: TimeBuckets | null, shift: number, capped: readonly number[], cap: number): { cells: CubeCell[]; cappedDistinct: Map<number, number> } {
  const moved: CubeCell[] = [];
  for (const part of parts) {
    const w = part.bucketUs ?? HOUR_US;
    if (buckets && (buckets.widthUs % w !== 0 || buckets.originUs % w !== 0)) {
      throw new PartsError(`a part's cells are kept in buckets of ${w / 1e6} s, which do not divide the merged log's ${buckets.label} buckets (${buckets.widthUs / 1e6} s); set time.bucket to 1h, 6h, 1d, 7d or 30d before the first part`);
    }
    for (const c of part.cells) {
      const bucket = c.bucket < 0 ? -1 : buckets ? Math.floor((c.bucket * w - buckets.originUs) / buckets.widthUs) : 0;
      moved.push({ ...reshift(c, part.shift, shift), bucket });
    }
  }
  const raw = mergeByKey(moved);
  const cappedDistinct = new Map<number, number>();
  if (capped.length === 0) return { cells: raw, cappedDistinct };
  const kept = capped.map((i) => {
    const rows = new Map<string, number>();
    for (const c of raw) rows.set(c.segment[i] as string, (rows.get(c.segment[i] as string) ?? 0) + c.n);
    cappedDistinct.set(i, [...rows.keys()].filter((v) => v !== NULL_LABEL).length);
    return new Set([...rows.entries()].sort((a, b) => b[1] - a[1] || compareText(a[0], b[0])).slice(0, cap).map(([v]) => v));
  });
  const relabelled = raw.map((c) => ({ ...c, segment: c.segment.map((v, i) => { const k = capped.indexOf(i); return k < 0 || kept[k]?.has(v) ? v : OTHER_LABEL; }) }));
  return { cells: mergeByKey(relabelled), cappedDistinct };
}

/**
 * Rows grouped by what a target's weight and a clip row depend on: segment values (uncapped text), action,
 * a valid propensity p, and the reward when finite (null otherwise), with the rows of each group. Columnar.
 */
export interface WeightGroups {
  readonly segments: readonly (readonly string[])[];
  readonly action: readonly string[];
  readonly p: readonly number[];
  readonly r: readonly (number | null)[];
  readonly rows: readonly number[];
}

/** q(segment, action) of a target, as the tail query's SQL gives it (app/core/scan/rows.ts, qExpression). */
function probabilityOf(target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[]): (segment: readonly string[], action: string) => number {
  switch (target.kind) {
    case 'uniform': {
      const q = actions.length ? 1 / actions.length : 0;
      const set = new Set(actions);
      return (_, a) => (set.has(a) ? q : 0);
    }
    case 'always':
      return (_, a) => (a === target.action ? 1 : 0);
    case 'table': {
      const at = target.keyColumns.map((c) => segmentColumns.indexOf(c));
      return (s, a) => target.probabilities.get(at.map((i) => s[i]).join(SEP))?.get(a) ?? 0;
    }
    case 'column':
      throw new PartsError(`target ${target.name} reads a target_propensity column; an audit merged from parts supports uniform, always:<action> and table targets`);
  }
}

/** Every group's weight w = q/p with its rows and reward, over all parts. */
function weightsOf(parts: readonly WeightGroups[], target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[]): { w: number; r: number | null; rows: number }[] {
  const q = probabilityOf(target, segmentColumns, actions);
  const out: { w: number; r: number | null; rows: number }[] = [];
  for (const g of parts) {
    for (let i = 0; i < g.p.length; i++) {
      const w = q(g.segments.map((s) => s[i] as string), g.action[i] as string) / (g.p[i] as number);
      if (w > 0 && Number.isFinite(w)) out.push({ w, r: g.r[i] ?? null, rows: g.rows[i] as number });
    }
  }
  return out;
}

/** The tail query's answer (rows.ts tailSql, parsed by parseTail): the `limit` largest weights and the log10 histogram. */
export function tailOf(parts: readonly WeightGroups[], target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], limit: number): TailResult {
  const byWeight = new Map<number, number>();
  for (const { w, rows } of weightsOf(parts, target, segmentColumns, actions)) byWeight.set(w, (byWeight.get(w) ?? 0) + rows);
  const sorted = [...byWeight.entries()].sort((a, b) => b[0] - a[0]);
  const weights: number[] = [];
  for (const [w, n] of sorted) {
    for (let k = 0; k < n && weights.length < limit; k++) weights.push(w);
    if (weights.length >= limit) break;
  }
  const bins = new Map<number, number>();
  for (const [w, n] of sorted) {
    const x = Math.floor(Math.log10(w) / LOG10_BIN) * LOG10_BIN;
    const bin = Math.round(x / LOG10_BIN) * LOG10_BIN;
    bins.set(bin, (bins.get(bin) ?? 0) + n);
  }
  const ordered = [...bins.entries()].sort((a, b) => a[0] - b[0]);
  return { weights, log10Bins: ordered.map((b) => Number(b[0].toFixed(6))), counts: ordered.map((b) => b[1]) };
}

/** The clip query's answer (rows.ts clipRowsSql): rows with weight above `above`, weight descending, reward ascending, nulls last. */
export function clipOf(parts: readonly WeightGroups[], target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], above: number, limit: number): { w: number; r: number | null }[] {
  const rows = weightsOf(parts, target, segmentColumns, actions).filter((x) => x.w > above);
  rows.sort((a, b) => b.w - a.w || (a.r === null ? (b.r === null ? 0 : 1) : b.r === null ? -1 : a.r - b.r));
  const out: { w: number; r: number | null }[] = [];
  for (const x of rows) {
    for (let k = 0; k < x.rows && out.length < limit; k++) out.push({ w: x.w, r: x.r });
    if (out.length >= limit) break;
  }
  return out;
}

/** One part's decision ids: distinct hashes ascending, and per hash its ids (exact text) with their rows in the part. */
export interface PartIds {
  /** distinct 64-bit hashes, ascending */
  readonly hashes: BigUint64Array;
  /** the ids of hashes[i] with their rows, read only where a hash is shared */
  idsAt(i: number): readonly (readonly [string, number])[];
  /** ids held by more than one row within the part, with their rows */
  readonly repeated: ReadonlyMap<string, number>;
}

function findHash(hashes: BigUint64Array, h: bigint): number {
  let lo = 0;
  let hi = hashes.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const v = hashes[mid] as bigint;
    if (v === h) return mid;
    if (v < h) lo = mid + 1;
    else hi = mid - 1;
  }
  return -1;
}

/**
 * Duplicated decision ids over all parts, as the duplicates query answers over the whole log (rows.ts
 * duplicatesSql): ids repeated within a part are known exactly from the part; a hash held by two parts is
 * the only way an id can be in both, and only those hashes' ids are compared, exactly, so a collision of
 * two different ids is never reported.
 */
export function duplicatesOf(parts: readonly PartIds[], examples: number): Duplicates {
  const copies = new Map<string, number>();
  for (const p of parts) for (const [id, n] of p.repeated) copies.set(id, n);
  const all = new BigUint64Array(parts.reduce((s, p) => s + p.hashes.length, 0));
  let at = 0;
  for (const p of parts) {
    all.set(p.hashes, at);
    at += p.hashes.length;
  }
  all.sort();
  for (let i = 1; i < all.length; i++) {
    const h = all[i] as bigint;
    if (h !== all[i - 1] || (i > 1 && all[i - 2] === h)) continue;
    const seen = new Map<string, number>();
    for (const p of parts) {
      const k = findHash(p.hashes, h);
      if (k >= 0) for (const [id, n] of p.idsAt(k)) seen.set(id, (seen.get(id) ?? 0) + n);
    }
    for (const [id, n] of seen) if (n > 1) copies.set(id, n);
  }
  const ids = [...copies.keys()].sort(compareText);
  const rowsInDuplicates = [...copies.values()].reduce((s, n) => s + n, 0);
  return { ids: ids.length, rowsInDuplicates, extraRows: rowsInDuplicates - ids.length, maxCopies: Math.max(0, ...copies.values()), exampleIds: ids.slice(0, Math.max(1, examples)) };
}
