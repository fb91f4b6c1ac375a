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
  values: number[] = [];
  has: number[] = [];
  rows = 0;
  constructor(readonly M: number) {}

  push(termOf: (i: number) => number | null): number {
    for (let i = 0; i < this.M; i++) {
      const v = termOf(i);
      this.values.push(v ?? 0);
      this.has.push(v === null ? 0 : 1);
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
function aggregate(cellCount: number, kinds: readonly Kind[], terms: Terms, sourceCell: readonly number[], sourceWeight: readonly number[], sourceRow: readonly number[], count: number): (cell: number, i: number) => number | null {
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
  return (cell, i) => {
    const j = cell * M + i;
    const kind = kinds[i] as Kind;
    if (kind < 2) return ext[j] as number | null;
    if (kind === 2) return plain[j] as number;
    const ki = k[i];
    return !any[j] ? 0 : ki === null || ki === undefined ? (plain[j] as number) : exact.double(j) / ki;
  };
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

const keyOf = (g: { segment: readonly string[]; action: string; version: string; bucket: number }) => `${g.segment.join(SEP)}${SEP}${g.action}${SEP}${g.version}${SEP}${g.bucket}`;

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

/**
 * The cube's uncapped cells (the query's `raw` level) from row groups already in the whole log's keys, in
 * ORDER BY keys order.
 */
export function replayRaw(groups: readonly KeyedGroup[], spec: ReplaySpec, order: (a: CubeCell, b: CubeCell) => number): CubeCell[] {
  const x: MeasureContext = { floor: spec.floor, d: duckdb };
  const measures = CELL_MEASURES as readonly Measure[];
  const M = measures.length;
  const shift = spec.reward?.shift ?? 0;
  const kinds = kindsOf(measures, x, spec.byPropensity);
  const cellAt = new Map<string, number>();
  const cellKeys: KeyedGroup[] = [];
  const cellOfGroup = (g: KeyedGroup) => {
    let c = cellAt.get(g.key);
    if (c === undefined) {
      cellAt.set(g.key, (c = cellKeys.length));
      cellKeys.push(g);
    }
    return c;
  };
  const terms = new Terms(M);
  const sourceCell: number[] = [];
  const sourceWeight: number[] = [];
  const sourceRow: number[] = [];
  let count = 0;
  if (spec.byPropensity) {
    // the by_p level: (keys, p) → c, c_r and the exact Σd, Σd² at the literal scales of cube.ts's rowSum
    const h = spec.reward ? 2 * spec.reward.halfRange : null;
    const k1 = h === null ? null : scaleOf(h, spec.rowCount);
    const k2 = h === null ? null : scaleOf(h * h, spec.rowCount);
    const memo = new Map<number, [number, number, number, number]>();
    const termsOf = (r: number) => {
      let t = memo.get(r);
      if (!t || Object.is(r, -0)) {
        const dd = r - shift;
        t = [k1 === null ? 0 : roundHalfEvenDouble(dd * k1), k2 === null ? 0 : roundHalfEvenDouble(dd * dd * k2), dd, dd * dd];
        if (!Object.is(r, -0)) memo.set(r, t);
      }
      return t;
    };
    const at = new Map<string, number>();
    const entries: { keys: KeyedGroup; cell: number; c: number; c_r: number; pd: number; pd2: number }[] = [];
    const entryOf = new Int32Array(groups.length);
    groups.forEach((g, j) => {
      const key = `${g.key}${SEP}${g.p === null ? 'null' : String(g.p)}`;
      let e = at.get(key);
      if (e === undefined) {
        at.set(key, (e = entries.length));
        entries.push({ keys: g, cell: cellOfGroup(g), c: 0, c_r: 0, pd: 0, pd2: 0 });
      }
      entryOf[j] = e;
    });
    const sums = new ExactSums(2 * entries.length);
    groups.forEach((g, j) => {
      const ei = entryOf[j] as number;
      const e = entries[ei] as (typeof entries)[number];
      e.c += g.rows;
      if (g.r !== null) {
        e.c_r += g.rows;
        const [t1, t2, dd, dd2] = termsOf(g.r);
        sums.add(2 * ei, t1, g.rows);
        sums.add(2 * ei + 1, t2, g.rows);
        e.pd += g.rows * dd;
        e.pd2 += g.rows * dd2;
      }
    });
    entries.forEach((e, ei) => {
      const s_d = e.c_r === 0 ? 0 : k1 === null ? e.pd : sums.double(2 * ei) / k1;
      const s_d2 = e.c_r === 0 ? 0 : k2 === null ? e.pd2 : sums.double(2 * ei + 1) / k2;
      const g: MeasureGroup = { p: e.keys.p, c: e.c, c_r: e.c_r, s_d, s_d2, s_r: s_d + shift * e.c_r, s_r2: s_d2 + 2 * shift * s_d + shift * shift * e.c_r };
      sourceCell.push(e.cell);
      sourceWeight.push(1);
      sourceRow.push(terms.push((i) => (measures[i] as Measure).group(g, x)));
    });
    count = entries.length;
  } else {
    const memo = rowMemo();
    for (const g of groups) {
      const row: MeasureRow = { p: g.p, r: g.r, d: g.r === null ? null : g.r - shift };
      sourceCell.push(cellOfGroup(g));
      sourceWeight.push(g.rows);
      sourceRow.push(memo(g.p, g.r, () => terms.push((i) => (measures[i] as Measure).term(row, x))));
      count += g.rows;
    }
  }
  const value = aggregate(cellKeys.length, kinds, terms, sourceCell, sourceWeight, sourceRow, count);
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
    const key = keyOf(c);
    let j = at.get(key);
    if (j === undefined) {
      at.set(key, (j = firsts.length));
      firsts.push(c);
    }
    sourceCell.push(j);
    sourceRow.push(terms.push((i) => field(c, i)));
  }
  const value = aggregate(firsts.length, kinds, terms, sourceCell, cells.map(() => 1), sourceRow, cells.length);
  return firsts.map((first, j) => cellOf(first, (i) => value(j, i), measures)).sort(order);
}
