/**
 * The whole log's cube formed from row groups, as the cube query forms it (app/core/scan/cube.ts, cubeSql),
 * to the bit. A row group is rows sharing (segment values, action, version, bucket, p, r): identical rows, so
 * every per-row term of the query is one term times the group's rows, and every fixed-point sum of the query
 * (Σ round_half_even(term·2^s) in HUGEINT) is Σ rows·round_half_even(term·2^s) here, in 26-bit limbs of
 * doubles (exact.ts, ExactSums): integers that add exactly, whichever parts the rows came in. Each distinct
 * term row (rows sharing p and r, or one (keys, p) group) is rounded once. The scales 2^s are the query's, from the whole log's bounds
 * and counts, which the merged groups give exactly; a HUGEINT total becomes the double DuckDB forms from it
 * (hugeintToDouble). Both forms of the query are replayed: rows grouped by (cell keys, p) first (byPropensity)
 * or every row's terms summed at once.
 *
 * The two things replayed with doubles, as the query itself does them, are order-free: the g level's
 * s_r = s_d + shift·c_r and s_r2 (per group, from exact group sums), and the integral counts (whole numbers).
 * Only a sum with a term that is not finite (±∞ or NaN, whose query sum is then a plain double sum) and a
 * reward without a finite range (no fixed point for the groups' Σd) are summed in doubles, in part order.
 */
import { blankCell, CELL_MEASURES, DERIVED_MEASURES, type Measure, type MeasureContext, type MeasureGroup, type MeasureRow } from '../cube/measures.ts';
import type { CubeCell } from '../cube/types.ts';
import { SEP } from '../cube/rollup.ts';
import type { RewardShift } from '../scan/cube.ts';
import { duckdb } from '../sql/dialect-duckdb.ts';
import { ExactSums, roundHalfEvenDouble } from './exact.ts';

const HEADROOM = 124;

/** DuckDB's DOUBLE → HUGEINT cast: round half to even. */
export function roundHalfEven(x: number): bigint {
  return BigInt(roundHalfEvenDouble(x));
}

/** The cube query's scale (scaleSql): 2^floor(124 − log2(count + 1) − log2(max(bound, 1e-300))), clamped to ±1000; null for a bound that is not finite. */
export function scaleOf(bound: number, count: number): number | null {
  if (!Number.isFinite(bound)) return null;
  const e = Math.min(1000, Math.max(-1000, Math.floor(HEADROOM - Math.log2(count + 1) - Math.log2(Math.max(bound, 1e-300)))));
  return 2 ** e;
}

/** Rows sharing (cell keys, p, r), columnar: p null where the log has none; r null where not finite. */
export interface RowGroups {
  readonly segments: readonly (readonly string[])[];
  readonly action: readonly string[];
  readonly version: readonly string[];
  /** the bucket in the part's own width (−1: no time) */
  readonly bucket: readonly number[];
  readonly p: readonly (number | null)[];
  readonly r: readonly (number | null)[];
  readonly rows: readonly number[];
}

/** One row group in the whole log's keys. */
export interface KeyedGroup {
  readonly key: string;
  readonly segment: readonly string[];
  readonly action: string;
  readonly version: string;
  readonly bucket: number;
  readonly p: number | null;
  readonly r: number | null;
  rows: number;
}

export interface ReplaySpec {
  readonly floor: number;
  readonly byPropensity: boolean;
  readonly reward: RewardShift | null;
  readonly rowCount: number;
}

/** How a measure is summed: 0 minimum, 1 maximum, 2 whole-number count (plain doubles), 3 fixed point. */
type Kind = 0 | 1 | 2 | 3;

function kindsOf(measures: readonly Measure[], x: MeasureContext, grouped: boolean): Kind[] {
  return measures.map((m): Kind => {
    if (m.merge === 'min') return 0;
    if (m.merge === 'max') return 1;
    const agg = grouped ? m.groups(x) : m.rows(x);
    return 'sum' in agg && agg.integral ? 2 : 3;
  });
}

/**
 * Terms by row: `values[row·M + i]` the term row `row` adds to measure i (valid where `has` is 1). Sources
 * (what the final aggregation reads: log rows, (keys, p) groups or capped cells) point at a term row with a
 * weight, the rows they stand for; identical sources share a row, so each term is rounded once.
 */
class Terms {
  values: Float64Array;
  has: Uint8Array;
  rows = 0;
  constructor(readonly M: number, capacity = 1024) {
    this.values = new Float64Array(Math.max(1, capacity) * M);
    this.has = new Uint8Array(Math.max(1, capacity) * M);
  }

  push(termOf: (i: number) => number | null): number {
    const M = this.M;
    let o = this.rows * M;
    if (o + M > this.values.length) {
      const values = new Float64Array(2 * this.values.length);
      values.set(this.values);
      const has = new Uint8Array(2 * this.has.length);
      has.set(this.has);
      this.values = values;
      this.has = has;
    }
    for (let i = 0; i < M; i++, o++) {
      const v = termOf(i);
      if (v !== null) {
        this.values[o] = v;
        this.has[o] = 1;
      }
    }
    return this.rows++;
  }
}

/**
 * The cells' sums over sources, as the cube query's final aggregation forms them: per measure the scale from
 * the largest |term| over `count` sources (the scale CTE's max(abs(term)), a term that is not finite leaving
 * the sum without one), fixed-point sums exactly (round_half_even(term·2^s) × weight, in ExactSums), a plain
 * double sum in source order for a sum without a scale, whole-number counts and minima/maxima as doubles.
 */
function aggregate(cellCount: number, kinds: readonly Kind[], terms: Terms, sourceCell: readonly number[], sourceWeight: readonly number[], sourceRow: readonly number[], count: number): { value: (cell: number, i: number) => number | null; exact: boolean } {
  const M = kinds.length;
  const { values, has } = terms;
  const bound = kinds.map(() => 0);
  for (let r = 0; r < terms.rows; r++) {
    for (let i = 0; i < M; i++) {
      if ((kinds[i] as Kind) < 2 || !has[r * M + i]) continue;
      const a = Math.abs(values[r * M + i] as number);
      if (!(a <= (bound[i] as number))) bound[i] = Number.isFinite(a) ? a : Infinity;
    }
  }
  const k = bound.map((b) => scaleOf(b, count));
  // each term row's integers, once: round_half_even(term·2^s)
  const ints = new Float64Array(terms.rows * M);
  for (let r = 0; r < terms.rows; r++) {
    for (let i = 0; i < M; i++) {
      const ki = k[i];
      if (kinds[i] === 3 && ki !== null && ki !== undefined && has[r * M + i]) ints[r * M + i] = roundHalfEvenDouble((values[r * M + i] as number) * ki);
    }
  }
  const n = cellCount * M;
  const exact = new ExactSums(n);
  const plain = new Float64Array(n);
  const any = new Uint8Array(n);
  const ext: (number | null)[] = new Array<number | null>(n).fill(null);
  for (let s = 0; s < sourceCell.length; s++) {
    const o = (sourceCell[s] as number) * M;
    const w = sourceWeight[s] as number;
    const r = (sourceRow[s] as number) * M;
    for (let i = 0; i < M; i++) {
      if (!has[r + i]) continue;
      const v = values[r + i] as number;
      const kind = kinds[i] as Kind;
      if (kind === 0) ext[o + i] = ext[o + i] === null ? v : Math.min(ext[o + i] as number, v);
      else if (kind === 1) ext[o + i] = ext[o + i] === null ? v : Math.max(ext[o + i] as number, v);
      else if (kind === 2) plain[o + i] = (plain[o + i] as number) + v * w;
      else {
        any[o + i] = 1;
        plain[o + i] = (plain[o + i] as number) + v * w;
        if (k[i] !== null) exact.add(o + i, ints[r + i] as number, w);
      }
    }
  }
  const value = (cell: number, i: number): number | null => {
    const j = cell * M + i;
    const kind = kinds[i] as Kind;
    if (kind < 2) return ext[j] as number | null;
    if (kind === 2) return plain[j] as number;
    const ki = k[i];
    return !any[j] ? 0 : ki === null || ki === undefined ? (plain[j] as number) : exact.double(j) / ki;
  };
  return { value, exact: kinds.every((kind, i) => kind !== 3 || k[i] !== null) };
}

/** The cube cell of a cell's sums, derived measures added (a fresh segment array: cells are read often by the checks). */
function cellOf(keys: { segment: readonly string[]; action: string; version: string; bucket: number }, value: (i: number) => number | null, measures: readonly Measure[]): CubeCell {
  const cell = blankCell();
  cell.segment = keys.segment.slice();
  cell.action = keys.action;
  cell.version = keys.version;
  cell.bucket = keys.bucket;
  for (let i = 0; i < measures.length; i++) cell[(measures[i] as Measure).field] = value(i);
  for (const d of DERIVED_MEASURES) cell[d.field] = d.of.reduce((s, f) => s + (cell[f] as number), 0);
  cell.target = null;
  return cell as unknown as CubeCell;
}


/** A memo of term rows by (p, r): rows with the same propensity and reward add the same terms (−0 is not memoised: SameValueZero would take it for 0). */
function rowMemo(): (p: number | null, r: number | null, make: () => number) => number {
  const byP = new Map<number | null, Map<number | null, number>>();
  return (p, r, make) => {
    if (Object.is(p, -0) || Object.is(r, -0)) return make();
    let m = byP.get(p);
    if (!m) byP.set(p, (m = new Map()));
    let row = m.get(r);
    if (row === undefined) m.set(r, (row = make()));
    return row;
  };
}

/** The literal scales of the by_p level's Σd and Σd² (cube.ts rowSum): from the reward's range and the log's rows. */
export interface EntryScales {
  readonly shift: number;
  readonly k1: number | null;
  readonly k2: number | null;
}

export function scalesOf(spec: Pick<ReplaySpec, 'reward' | 'rowCount'>): EntryScales {
  const h = spec.reward ? 2 * spec.reward.halfRange : null;
  return { shift: spec.reward?.shift ?? 0, k1: h === null ? null : scaleOf(h, spec.rowCount), k2: h === null ? null : scaleOf(h * h, spec.rowCount) };
}

/** A cell's keys. */
export interface CellKeys {
  readonly segment: readonly string[];
  readonly action: string;
  readonly version: string;
  readonly bucket: number;
}

export const cellKey = (g: CellKeys) => `${g.segment.join(SEP)}${SEP}${g.action}${SEP}${g.version}${SEP}${g.bucket}`;
const pKey = (p: number | null) => (p === null ? 'null' : String(p));

/**
 * The cube query's by_p level: rows grouped by (cell keys, p), each group's c, c_r and its exact Σd, Σd² at the
 * literal scales (round_half_even(d·2^s) summed in ExactSums, 2 sums an entry), Σd and Σd² also as plain double
 * sums in the order groups were added (what the query sums when the reward has no finite range: k1 null). An
 * entry keeps the p of the first group added to it (p and −0 share an entry, as String(p) keys them). Entries are
 * numbered in the order they first appear, cells likewise; the lookups are built on demand (`index`), so a
 * table read back from a parts folder keys only the cells a new part can touch.
 */
export class Entries {
  readonly cells: CellKeys[] = [];
  cell: number[] = [];
  p: (number | null)[] = [];
  c: number[] = [];
  cr: number[] = [];
  pd: number[] = [];
  pd2: number[] = [];
  sums = new ExactSums(0);
  private cellAt = new Map<string, number>();
  private entryAt = new Map<string, number>();
  private memo = new Map<number, [number, number, number, number]>();

  constructor(readonly scales: EntryScales) {}

  /** The same entries under other cell keys (one for each cell, none shared): the arrays are shared, not copied. */
  relabelled(cells: readonly CellKeys[]): Entries {
    const e = new Entries(this.scales);
    for (const k of cells) e.cells.push(k);
    e.cell = this.cell;
    e.p = this.p;
    e.c = this.c;
    e.cr = this.cr;
    e.pd = this.pd;
    e.pd2 = this.pd2;
    e.sums = this.sums;
    return e;
  }

  get length(): number {
    return this.cell.length;
  }

  /** Keys the cells (and their entries) that `touch` picks among those not keyed yet; every cell added later is keyed. */
  index(touch: (keys: CellKeys) => boolean = () => true): void {
    const picked = new Set<number>();
    for (let c = 0; c < this.cells.length; c++) {
      const keys = this.cells[c] as CellKeys;
      if (this.cellAt.has(cellKey(keys)) || !touch(keys)) continue;
      this.cellAt.set(cellKey(keys), c);
      picked.add(c);
    }
    for (let e = 0; e < this.cell.length; e++) if (picked.has(this.cell[e] as number)) this.entryAt.set(`${this.cell[e]}${SEP}${pKey(this.p[e] ?? null)}`, e);
  }

  /** The entry of (keys, p), added (with zero sums) if new. */
  entryOf(keys: CellKeys, p: number | null, key = cellKey(keys)): number {
    let c = this.cellAt.get(key);
    if (c === undefined) {
      this.cellAt.set(key, (c = this.cells.length));
      this.cells.push(keys);
    }
    const ek = `${c}${SEP}${pKey(p)}`;
    let e = this.entryAt.get(ek);
    if (e === undefined) {
      this.entryAt.set(ek, (e = this.cell.length));
      this.cell.push(c);
      this.p.push(p);
      this.c.push(0);
      this.cr.push(0);
      this.pd.push(0);
      this.pd2.push(0);
      if (2 * this.cell.length > this.sums.n) this.sums = this.sums.grown(Math.max(64, this.sums.n));
    }
    return e;
  }

  /** Entries read back (cells already pushed): their exact sums as limbs, 2·LIMBS an entry; plain double sums zero. */
  load(cell: readonly number[], p: readonly (number | null)[], c: readonly number[], cr: readonly number[], limbs: ArrayLike<number>): void {
    if (this.cell.length) throw new Error('Entries.load: not empty');
    for (let e = 0; e < cell.length; e++) {
      this.cell.push(cell[e] as number);
      this.p.push(p[e] ?? null);
      this.c.push(c[e] as number);
      this.cr.push(cr[e] as number);
      this.pd.push(0);
      this.pd2.push(0);
    }
    this.sums = new ExactSums(2 * cell.length);
    this.sums.limbs.set(limbs);
  }

  private termsOf(r: number): [number, number, number, number] {
    let t = this.memo.get(r);
    if (!t || Object.is(r, -0)) {
      const { shift, k1, k2 } = this.scales;
      const dd = r - shift;
      t = [k1 === null ? 0 : roundHalfEvenDouble(dd * k1), k2 === null ? 0 : roundHalfEvenDouble(dd * dd * k2), dd, dd * dd];
      if (!Object.is(r, -0)) this.memo.set(r, t);
    }
    return t;
  }

  /** Adds `rows` rows of (keys, p, r) (r null: no finite reward). */
  addGroup(keys: CellKeys & { readonly key?: string }, p: number | null, r: number | null, rows: number): void {
    const e = this.entryOf(keys, p, keys.key);
    this.c[e] = (this.c[e] as number) + rows;
    if (r === null) return;
    this.cr[e] = (this.cr[e] as number) + rows;
    const [t1, t2, dd, dd2] = this.termsOf(r);
    this.sums.add(2 * e, t1, rows);
    this.sums.add(2 * e + 1, t2, rows);
    this.pd[e] = (this.pd[e] as number) + rows * dd;
    this.pd2[e] = (this.pd2[e] as number) + rows * dd2;
  }

  /** Adds entry j of `other` (at the same scales) to (keys, p). */
  addEntry(keys: CellKeys, other: Entries, j: number, key = cellKey(keys)): void {
    const e = this.entryOf(keys, other.p[j] ?? null, key);
    this.c[e] = (this.c[e] as number) + (other.c[j] as number);
    this.cr[e] = (this.cr[e] as number) + (other.cr[j] as number);
    this.sums.addSum(2 * e, other.sums, 2 * j);
    this.sums.addSum(2 * e + 1, other.sums, 2 * j + 1);
    this.pd[e] = (this.pd[e] as number) + (other.pd[j] as number);
    this.pd2[e] = (this.pd2[e] as number) + (other.pd2[j] as number);
  }
}

/**
 * The cube's uncapped cells from by_p entries already in the whole log's keys, in ORDER BY keys order; `exact`
 * says whether every fixed-point sum had a scale (a term that is not finite leaves its sum a plain double sum,
 * in entry order).
 */
export function finishEntries(entries: Entries, spec: ReplaySpec, order: (a: CubeCell, b: CubeCell) => number): { cells: CubeCell[]; exact: boolean } {
  const x: MeasureContext = { floor: spec.floor, d: duckdb };
  const measures = CELL_MEASURES as readonly Measure[];
  const kinds = kindsOf(measures, x, true);
  const { shift, k1, k2 } = entries.scales;
  const n = entries.length;
  const terms = new Terms(measures.length, n);
  const sourceRow: number[] = new Array<number>(n);
  for (let e = 0; e < n; e++) {
    const cr = entries.cr[e] as number;
    const s_d = cr === 0 ? 0 : k1 === null ? (entries.pd[e] as number) : entries.sums.double(2 * e) / k1;
    const s_d2 = cr === 0 ? 0 : k2 === null ? (entries.pd2[e] as number) : entries.sums.double(2 * e + 1) / k2;
    const g: MeasureGroup = { p: entries.p[e] ?? null, c: entries.c[e] as number, c_r: cr, s_d, s_d2, s_r: s_d + shift * cr, s_r2: s_d2 + 2 * shift * s_d + shift * shift * cr };
    sourceRow[e] = terms.push((i) => (measures[i] as Measure).group(g, x));
  }
  const { value, exact } = aggregate(entries.cells.length, kinds, terms, entries.cell, new Array<number>(n).fill(1), sourceRow, n);
  return { cells: entries.cells.map((keys, c) => cellOf(keys, (i) => value(c, i), measures)).sort(order), exact: exact && k1 !== null && k2 !== null };
}

/**
 * The cube's uncapped cells (the query's `raw` level) from row groups already in the whole log's keys, in
 * ORDER BY keys order: propensity-grouped through the by_p entries, or every row's terms summed at once.
 */
export function replayRaw(groups: readonly KeyedGroup[], spec: ReplaySpec, order: (a: CubeCell, b: CubeCell) => number): CubeCell[] {
  if (spec.byPropensity) {
    const entries = new Entries(scalesOf(spec));
    for (const g of groups) entries.addGroup(g, g.p, g.r, g.rows);
    return finishEntries(entries, spec, order).cells;
  }
  const x: MeasureContext = { floor: spec.floor, d: duckdb };
  const measures = CELL_MEASURES as readonly Measure[];
  const shift = spec.reward?.shift ?? 0;
  const kinds = kindsOf(measures, x, false);
  const cellAt = new Map<string, number>();
  const cellKeys: KeyedGroup[] = [];
  const terms = new Terms(measures.length);
  const sourceCell: number[] = [];
  const sourceWeight: number[] = [];
  const sourceRow: number[] = [];
  let count = 0;
  const memo = rowMemo();
  for (const g of groups) {
    let c = cellAt.get(g.key);
    if (c === undefined) {
      cellAt.set(g.key, (c = cellKeys.length));
      cellKeys.push(g);
    }
    const row: MeasureRow = { p: g.p, r: g.r, d: g.r === null ? null : g.r - shift };
    sourceCell.push(c);
    sourceWeight.push(g.rows);
    sourceRow.push(memo(g.p, g.r, () => terms.push((i) => (measures[i] as Measure).term(row, x))));
    count += g.rows;
  }
  const { value } = aggregate(cellKeys.length, kinds, terms, sourceCell, sourceWeight, sourceRow, count);
  return cellKeys.map((keys, c) => cellOf(keys, (i) => value(c, i), measures)).sort(order);
}

/**
 * Capped cells merged as the cube query's `merged` level merges them: counts add, every other sum in fixed
 * point again at the scale of the `capped` level (its largest |value| over all its cells, and their count),
 * minima and maxima combine.
 */
export function replayCappedMerge(cells: readonly CubeCell[], spec: ReplaySpec, order: (a: CubeCell, b: CubeCell) => number): CubeCell[] {
  const x: MeasureContext = { floor: spec.floor, d: duckdb };
  const measures = CELL_MEASURES as readonly Measure[];
  const kinds = kindsOf(measures, x, spec.byPropensity);
  const field = (c: CubeCell, i: number) => (c as unknown as Record<string, number | null>)[(measures[i] as Measure).field] ?? null;
  const terms = new Terms(measures.length);
  const at = new Map<string, number>();
  const firsts: CubeCell[] = [];
  const sourceCell: number[] = [];
  const sourceRow: number[] = [];
  for (const c of cells) {
    const key = cellKey(c);
    let j = at.get(key);
    if (j === undefined) {
      at.set(key, (j = firsts.length));
      firsts.push(c);
    }
    sourceCell.push(j);
    sourceRow.push(terms.push((i) => field(c, i)));
  }
  const { value } = aggregate(firsts.length, kinds, terms, sourceCell, cells.map(() => 1), sourceRow, cells.length);
  return firsts.map((first, j) => cellOf(first, (i) => value(j, i), measures)).sort(order);
}
