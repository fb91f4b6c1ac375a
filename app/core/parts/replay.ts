/**
 * The whole log's cube formed from row groups, as the cube query forms it (app/core/scan/cube.ts, cubeSql),
 * to the bit. A row group is rows sharing (segment values, action, version, bucket, p, r): identical rows, so
 * every per-row term of the query is one term times the group's rows, and every fixed-point sum of the query
 * (Σ round_half_even(term·2^s) in HUGEINT) is Σ rows·round_half_even(term·2^s) here, in BigInt: integers that
 * add exactly, whichever parts the rows came in. The scales 2^s are the query's, from the whole log's bounds
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
import { hugeintToDouble } from '../scan/cube-clickhouse.ts';
import type { RewardShift } from '../scan/cube.ts';
import { duckdb } from '../sql/dialect-duckdb.ts';

const HEADROOM = 124;

/** DuckDB's DOUBLE → HUGEINT cast: round half to even. */
export function roundHalfEven(x: number): bigint {
  if (Math.abs(x) >= 2 ** 52) return BigInt(x);
  const f = Math.floor(x);
  const diff = x - f;
  const n = diff > 0.5 ? f + 1 : diff < 0.5 ? f : f % 2 === 0 ? f : f + 1;
  return BigInt(n);
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

/** One fixed-point sum in progress: its exact integer, whether any term fell in, and a plain double sum for a scale that is not finite. */
interface Acc { big: bigint; any: boolean; plain: number }

/** One cell's running sums: exact fixed-point sums with their plain fallback, minima/maxima, and integral counts. */
interface CellSums { acc: Acc[]; ext: (number | null)[]; counts: number[] }
const emptySums = (n: number): CellSums => ({ acc: Array.from({ length: n }, () => ({ big: 0n, any: false, plain: 0 })), ext: new Array<number | null>(n).fill(null), counts: new Array<number>(n).fill(0) });

/** Adds `weight` copies of one term `v` of measure i into a cell's sums, as the cube query does. */
function addTerm(e: CellSums, m: Measure, integral: boolean, ki: number | null | undefined, i: number, v: number, weight: number): void {
  if (m.merge === 'min') e.ext[i] = e.ext[i] === null ? v : Math.min(e.ext[i] as number, v);
  else if (m.merge === 'max') e.ext[i] = e.ext[i] === null ? v : Math.max(e.ext[i] as number, v);
  else if (integral) e.counts[i] = (e.counts[i] as number) + v * weight;
  else {
    const a = e.acc[i] as Acc;
    a.any = true;
    a.plain += v * weight;
    if (ki !== null && ki !== undefined) a.big += BigInt(weight) * roundHalfEven(v * ki);
  }
}

/** The cube cell a cell's sums make: exact sums back to doubles at their scale, derived measures added. */
function cellOf(keys: { segment: readonly string[]; action: string; version: string; bucket: number }, e: CellSums, measures: readonly Measure[], integral: readonly boolean[], k: readonly (number | null)[]): CubeCell {
  const cell = blankCell();
  cell.segment = keys.segment as string[];
  cell.action = keys.action;
  cell.version = keys.version;
  cell.bucket = keys.bucket;
  measures.forEach((m, i) => {
    if (m.merge !== 'sum') cell[m.field] = e.ext[i];
    else if (integral[i]) cell[m.field] = e.counts[i];
    else {
      const a = e.acc[i] as Acc;
      const ki = k[i];
      cell[m.field] = !a.any ? 0 : ki === null || ki === undefined ? a.plain : hugeintToDouble(a.big) / ki;
    }
  });
  for (const d of DERIVED_MEASURES) cell[d.field] = d.of.reduce((s, f) => s + (cell[f] as number), 0);
  cell.target = null;
  return cell as unknown as CubeCell;
}

const keyOf = (g: { segment: readonly string[]; action: string; version: string; bucket: number }) => `${g.segment.join(SEP)}${SEP}${g.action}${SEP}${g.version}${SEP}${g.bucket}`;

/** Per measure, a scale over `count` sources from the largest |term|, as the scale CTE's max(abs(term)) FILTER (where). */
function scales(measures: readonly Measure[], count: number, each: (visit: (termOf: (m: Measure, i: number) => number | null) => void) => void): (number | null)[] {
  const bound = measures.map(() => 0);
  each((termOf) => {
    measures.forEach((m, i) => {
      if (m.merge !== 'sum') return;
      const t = termOf(m, i);
      if (t === null) return;
      const a = Math.abs(t);
      // a term that is not finite leaves the sum without a scale (isfinite fails on the query's bound)
      if (!(a <= (bound[i] as number))) bound[i] = Number.isFinite(a) ? a : Infinity;
    });
  });
  return bound.map((b) => scaleOf(b, count));
}

function integralOf(m: Measure, x: MeasureContext, grouped: boolean): boolean {
  const agg = grouped ? m.groups(x) : m.rows(x);
  return 'sum' in agg && !!agg.integral;
}

/**
 * The cube's uncapped cells (the query's `raw` level) from row groups already in the whole log's keys, in
 * ORDER BY keys order.
 */
export function replayRaw(groups: readonly KeyedGroup[], spec: ReplaySpec, order: (a: CubeCell, b: CubeCell) => number): CubeCell[] {
  const x: MeasureContext = { floor: spec.floor, d: duckdb };
  const measures = CELL_MEASURES as readonly Measure[];
  const shift = spec.reward?.shift ?? 0;
  const integral = measures.map((m) => integralOf(m, x, spec.byPropensity));
  // the sources the final aggregation reads (g rows or log rows), each with its cell and weight (rows it stands for)
  type Source = { cell: string; keys: KeyedGroup; weight: number; termOf: (m: Measure) => number | null };
  const sources: Source[] = [];
  let count = 0;
  if (spec.byPropensity) {
    // the by_p level: (keys, p) → c, c_r and the exact Σd, Σd² at the literal scales of cube.ts's rowSum
    const h = spec.reward ? 2 * spec.reward.halfRange : null;
    const k1 = h === null ? null : scaleOf(h, spec.rowCount);
    const k2 = h === null ? null : scaleOf(h * h, spec.rowCount);
    const memo = new Map<number, [bigint, bigint, number, number]>();
    const termsOf = (r: number) => {
      let t = memo.get(r);
      if (!t) {
        const dd = r - shift;
        t = [k1 === null ? 0n : roundHalfEven(dd * k1), k2 === null ? 0n : roundHalfEven(dd * dd * k2), dd, dd * dd];
        memo.set(r, t);
      }
      return t;
    };
    const byP = new Map<string, { keys: KeyedGroup; c: number; c_r: number; sd: bigint; sd2: bigint; pd: number; pd2: number }>();
    for (const g of groups) {
      const k = `${g.key}${SEP}${g.p === null ? 'null' : String(g.p)}`;
      let e = byP.get(k);
      if (!e) byP.set(k, (e = { keys: g, c: 0, c_r: 0, sd: 0n, sd2: 0n, pd: 0, pd2: 0 }));
      e.c += g.rows;
      if (g.r !== null) {
        e.c_r += g.rows;
        const [t1, t2, dd, dd2] = termsOf(g.r);
        const n = BigInt(g.rows);
        e.sd += n * t1;
        e.sd2 += n * t2;
        e.pd += g.rows * dd;
        e.pd2 += g.rows * dd2;
      }
    }
    for (const e of byP.values()) {
      const s_d = e.c_r === 0 ? 0 : k1 === null ? e.pd : hugeintToDouble(e.sd) / k1;
      const s_d2 = e.c_r === 0 ? 0 : k2 === null ? e.pd2 : hugeintToDouble(e.sd2) / k2;
      const g: MeasureGroup = { p: e.keys.p, c: e.c, c_r: e.c_r, s_d, s_d2, s_r: s_d + shift * e.c_r, s_r2: s_d2 + 2 * shift * s_d + shift * shift * e.c_r };
      sources.push({ cell: e.keys.key, keys: e.keys, weight: 1, termOf: (m) => m.group(g, x) });
    }
    count = sources.length;
  } else {
    for (const g of groups) {
      const row: MeasureRow = { p: g.p, r: g.r, d: g.r === null ? null : g.r - shift };
      sources.push({ cell: g.key, keys: g, weight: g.rows, termOf: (m) => m.term(row, x) });
      count += g.rows;
    }
  }
  const terms = sources.map((s) => measures.map((m) => s.termOf(m)));
  const k = scales(measures, count, (visit) => { for (const t of terms) visit((_, i) => t[i] as number | null); });
  const cells = new Map<string, { keys: KeyedGroup; sums: CellSums }>();
  sources.forEach((s, j) => {
    let c = cells.get(s.cell);
    if (!c) cells.set(s.cell, (c = { keys: s.keys, sums: emptySums(measures.length) }));
    const t = terms[j] as (number | null)[];
    measures.forEach((m, i) => {
      const v = t[i];
      if (v !== null && v !== undefined) addTerm(c.sums, m, integral[i] as boolean, k[i], i, v, s.weight);
    });
  });
  const out = [...cells.values()].map(({ keys, sums }) => cellOf(keys, sums, measures, integral, k));
  return out.sort(order);
}

/**
 * Capped cells merged as the cube query's `merged` level merges them: counts add, every other sum in fixed
 * point again at the scale of the `capped` level (its largest |value| over all its cells, and their count),
 * minima and maxima combine.
 */
export function replayCappedMerge(cells: readonly CubeCell[], spec: ReplaySpec, order: (a: CubeCell, b: CubeCell) => number): CubeCell[] {
  const x: MeasureContext = { floor: spec.floor, d: duckdb };
  const measures = CELL_MEASURES as readonly Measure[];
  const integral = measures.map((m) => integralOf(m, x, spec.byPropensity));
  const value = (c: CubeCell, m: Measure) => (c as unknown as Record<string, number | null>)[m.field] ?? null;
  const k = scales(measures, cells.length, (visit) => { for (const c of cells) visit((m, i) => (integral[i] ? null : value(c, m))); });
  const merged = new Map<string, { first: CubeCell; sums: CellSums }>();
  for (const c of cells) {
    const key = keyOf(c);
    let e = merged.get(key);
    if (!e) merged.set(key, (e = { first: c, sums: emptySums(measures.length) }));
    const sums = e.sums;
    measures.forEach((m, i) => {
      const v = value(c, m);
      if (v !== null) addTerm(sums, m, integral[i] as boolean, k[i], i, v, 1);
    });
  }
  const out = [...merged.values()].map(({ first, sums }) => cellOf(first, sums, measures, integral, k));
  return out.sort(order);
}
