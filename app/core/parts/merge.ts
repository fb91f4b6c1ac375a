/**
 * Audits merged from parts (README, "Audits merged from parts"): a partitioned log (one file per day, say)
 * is read part by part, each part's scan results are kept, and the audit of the whole log is made from them
 * without reading the earlier parts again. What each part keeps, and how parts merge:
 *   - its profile: counts add, minima and maxima combine (mergeProfiles);
 *   - its row groups: rows sharing (segment values, action, version, bucket, p, finite r or null), in buckets from
 *     the epoch no wider than the merged log's (scan.ts storageWidth), with their count. Re-bucketed into the whole
 *     log's buckets, they give the whole log's cube to the bit: the cube query's fixed-point sums are sums of
 *     integers (rows × the rounded term), formed here at the whole log's scales and shift (replay.ts, mergeGroups);
 *     and every target's largest weights, histogram and clip rows, whatever the whole log's tail length
 *     (weightGroupsOf, tailOf, clipOf);
 *   - its decision ids grouped exactly with their 64-bit hashes, sorted by hash: ids shared by two parts have
 *     equal hashes, so only hashes held by more than one part have their ids compared (duplicatesOf).
 * Pure: the part files are read and written by app/cli/parts.ts.
 */
import { SEP } from '../cube/rollup.ts';
import type { CubeCell } from '../cube/types.ts';
import { EXACT_DISTINCT_MAX, type ColumnProfile, type Profile } from '../scan/profile.ts';
import { NULL_LABEL, OTHER_LABEL, type TimeBuckets } from '../scan/expressions.ts';
import { LOG10_BIN, type Duplicates, type TailResult } from '../scan/rows.ts';
import type { TargetPolicy } from '../targets/targets.ts';
import { replayCappedMerge, replayRaw, type KeyedGroup, type ReplaySpec, type RowGroups } from './replay.ts';

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

/** Distinct segment values (null label aside) and propensities (at most EXACT_DISTINCT_MAX + 1 of them) over all rows. */
export interface Distincts {
  readonly segments: readonly (readonly string[])[];
  readonly p: readonly number[];
}

export function addDistincts(into: Distincts | null, groups: RowGroups): Distincts {
  const values = groups.segments.map((_, i) => new Set(into?.segments[i] ?? []));
  const ps = new Set(into?.p ?? []);
  groups.segments.forEach((s, i) => { for (const v of s) if (v !== NULL_LABEL) values[i]?.add(v); });
  for (const p of groups.p) if (p !== null && ps.size <= EXACT_DISTINCT_MAX) ps.add(p);
  return { segments: values.map((v) => [...v]), p: [...ps] };
}

/**
 * The profile with each segment column's distinct count exact over all rows, and the propensity column's where
 * the whole log's profile would count it exactly (few values: profile.ts's EXACT_DISTINCT_MAX): the cube then
 * groups by propensity exactly when the whole log's does.
 */
export function withDistincts(profile: Profile, segmentColumns: readonly string[], propensity: string | null, d: Distincts): Profile {
  return {
    ...profile,
    columns: profile.columns.map((c) => {
      const i = segmentColumns.indexOf(c.name);
      if (i >= 0) return { ...c, distinct: d.segments[i]?.length ?? 0, distinctBasis: 'all rows' as const, distinctRows: profile.rows };
      if (c.name === propensity && d.p.length <= EXACT_DISTINCT_MAX && d.p.length <= Math.max(1, 0.5 * c.nonNull)) return { ...c, distinct: d.p.length, distinctBasis: 'all rows' as const, distinctRows: profile.rows };
      return c;
    }),
  };
}

/** withDistincts over the parts' row groups. */
export function withExactDistincts(profile: Profile, segmentColumns: readonly string[], propensity: string | null, parts: readonly RowGroups[]): Profile {
  return withDistincts(profile, segmentColumns, propensity, parts.reduce<Distincts | null>(addDistincts, null) ?? { segments: [], p: [] });
}

const compareText = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

/** The cube query's ORDER BY s0…, a, v, b. */
export function cellOrder(a: CubeCell, b: CubeCell): number {
  for (let i = 0; i < a.segment.length; i++) {
    const d = compareText(a.segment[i] as string, b.segment[i] as string);
    if (d) return d;
  }
  return compareText(a.action, b.action) || compareText(a.version, b.version) || a.bucket - b.bucket;
}

/** One part's row groups, in buckets of `bucketUs` from the epoch. */
export interface PartGroups {
  readonly groups: RowGroups;
  readonly bucketUs: number;
}

/**
 * The whole log's cube from its parts' row groups, to the bit what the cube query answers over the whole log
 * (replay.ts): groups re-bucketed into `buckets` (the whole log's, from the merged profile), the cells formed
 * with the query's fixed-point sums at the whole log's scales, and the `capped` segment columns cut to their
 * `cap` most frequent values as the cube query cuts them (rows descending, then the value), the rest merged
 * into "(other)" in fixed point again. Returns the cells and each capped column's distinct count before capping.
 */
export function mergeGroups(parts: readonly PartGroups[], buckets: TimeBuckets | null, spec: ReplaySpec, capped: readonly number[], cap: number): { cells: CubeCell[]; cappedDistinct: Map<number, number> } {
  const keyed: KeyedGroup[] = [];
  for (const part of parts) {
    const w = part.bucketUs;
    if (buckets && (buckets.widthUs % w !== 0 || buckets.originUs % w !== 0)) {
      throw new PartsError(`a part's rows are kept in buckets of ${w / 1e6} s, which do not divide the merged log's ${buckets.label} buckets (${buckets.widthUs / 1e6} s); set time.bucket to 1h, 6h, 1d, 7d or 30d before the first part`);
    }
    const g = part.groups;
    for (let i = 0; i < g.rows.length; i++) {
      const b0 = g.bucket[i] as number;
      const bucket = b0 < 0 ? -1 : buckets ? Math.floor((b0 * w - buckets.originUs) / buckets.widthUs) : 0;
      const segment = g.segments.map((s) => s[i] as string);
      const action = g.action[i] as string;
      const version = g.version[i] as string;
      keyed.push({ key: `${segment.join(SEP)}${SEP}${action}${SEP}${version}${SEP}${bucket}`, segment, action, version, bucket, p: g.p[i] ?? null, r: g.r[i] ?? null, rows: g.rows[i] as number });
    }
  }
  return capCells(replayRaw(keyed, spec, cellOrder), spec, capped, cap);
}

/**
 * The `capped` segment columns of uncapped cells cut to their `cap` most frequent values as the cube query cuts
 * them (rows descending, then the value), the rest merged into "(other)" in fixed point again; with each capped
 * column's distinct count before capping.
 */
export function capCells(raw: CubeCell[], spec: ReplaySpec, capped: readonly number[], cap: number): { cells: CubeCell[]; cappedDistinct: Map<number, number> } {
  const cappedDistinct = new Map<number, number>();
  if (capped.length === 0) return { cells: raw, cappedDistinct };
  const kept = capped.map((i) => {
    const rows = new Map<string, number>();
    for (const c of raw) rows.set(c.segment[i] as string, (rows.get(c.segment[i] as string) ?? 0) + c.n);
    cappedDistinct.set(i, [...rows.keys()].filter((v) => v !== NULL_LABEL).length);
    return new Set([...rows.entries()].sort((a, b) => b[1] - a[1] || compareText(a[0], b[0])).slice(0, cap).map(([v]) => v));
  });
  const relabelled = raw.map((c) => ({ ...c, segment: c.segment.map((v, i) => { const k = capped.indexOf(i); return k < 0 || kept[k]?.has(v) ? v : OTHER_LABEL; }) }));
  return { cells: replayCappedMerge(relabelled, spec, cellOrder), cappedDistinct };
}

/** The weight groups (segment values, action, valid p, finite r or null) of row groups, over every version and bucket. */
export function weightGroupsOf(groups: RowGroups): WeightGroups {
  const at = new Map<string, number>();
  const segments: string[][] = groups.segments.map(() => []);
  const action: string[] = [];
  const p: number[] = [];
  const r: (number | null)[] = [];
  const rows: number[] = [];
  for (let i = 0; i < groups.rows.length; i++) {
    const pi = groups.p[i];
    if (pi === null || pi === undefined || !(pi > 0 && pi <= 1)) continue;
    const ri = groups.r[i] ?? null;
    const key = `${groups.segments.map((s) => s[i]).join(SEP)}${SEP}${groups.action[i]}${SEP}${pi}${SEP}${ri}`;
    const j = at.get(key);
    if (j !== undefined) { rows[j] = (rows[j] as number) + (groups.rows[i] as number); continue; }
    at.set(key, rows.length);
    groups.segments.forEach((s, k) => segments[k]?.push(s[i] as string));
    action.push(groups.action[i] as string);
    p.push(pi);
    r.push(ri);
    rows.push(groups.rows[i] as number);
  }
  return { segments, action, p, r, rows };
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
  return duplicatesFromCopies(copiesOf(parts), examples);
}

/** The ids held by more than one row over all parts, with their rows (duplicatesOf before it is summarised). */
export function copiesOf(parts: readonly PartIds[]): Map<string, number> {
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
  return copies;
}

/** The duplicates query's answer from the ids held by more than one row. */
export function duplicatesFromCopies(copies: ReadonlyMap<string, number>, examples: number): Duplicates {
  const ids = [...copies.keys()].sort(compareText);
  const rowsInDuplicates = [...copies.values()].reduce((s, n) => s + n, 0);
  return { ids: ids.length, rowsInDuplicates, extraRows: rowsInDuplicates - ids.length, maxCopies: Math.max(0, ...copies.values()), exampleIds: ids.slice(0, Math.max(1, examples)) };
}
