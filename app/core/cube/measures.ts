/**
 * The cube's measures, each declared once: the field it fills on a cell, its column in the cube query's
 * result, how two cells merge it, and its aggregate in SQL. The cube query (app/core/scan/cube.ts), its
 * parser, the merge of cells (rollup.ts), the cell type (types.ts) and the Arrow layout
 * (app/engine/cube-arrow.ts) are all derived from these lists; a new sum is one entry here.
 *
 * Row sets (p is the logged propensity, r the reward, q a mapped target_propensity):
 *   - all rows:          n, the invalid-p counts, nPOne, nRNull
 *   - valid-p rows:      nP, sumInvP, sumInvP2, minP, maxP, nPBelowFloor        (0 < p <= 1)
 *   - rewarded rows:     valid p AND finite r:  nRw, sumInvPRw, sumInvP2Rw, sumR, sumR2, sumRInvP, sumRInvP2, sumR2InvP2,
 *                        and over d = r − shift: sumD, sumD2, sumDInvP, sumDInvP2, sumD2InvP, sumD2InvP2
 *   - any finite reward: nRAll, sumRAll, sumR2All                               (on-policy value, reward drift)
 */
import type { Dialect } from '../sql/dialect.ts';
import { finiteReward, validPropensity } from '../scan/expressions.ts';

/** How a measure combines when cells merge: sums add, minima and maxima combine (null is "no value"). */
export type Merge = 'sum' | 'min' | 'max';

/** What a measure's SQL may depend on besides the row. */
export interface MeasureContext {
  /** the support floor ε the cube is built with */
  readonly floor: number;
  /** the SQL dialect of the cube query */
  readonly d: Dialect;
}

/**
 * One aggregate, written as its term and filter so that the cube query can sum it exactly
 * (app/core/scan/cube.ts): `integral` sums add whole numbers only (counts), which doubles add exactly
 * in any order; every other sum is accumulated in fixed point.
 */
export type Aggregate =
  | { readonly sum: string; readonly where?: string; readonly integral?: boolean }
  | { readonly min: string; readonly where: string }
  | { readonly max: string; readonly where: string };

export interface Measure<F extends string = string, M extends Merge = Merge> {
  readonly field: F;
  /** column name in the cube query's result */
  readonly column: string;
  readonly merge: M;
  /** aggregate over the rows (columns p, r, d = r − shift and q of the cube's base projection) */
  readonly rows: (x: MeasureContext) => Aggregate;
  /**
   * the same aggregate over groups of rows sharing (cell keys, p), with c = rows, c_r = rows with a
   * finite reward, s_r / s_r2 = their Σr / Σr², s_d / s_d2 = their Σd / Σd²: Σ_rows f(p) = Σ_g c·f(p)
   * and Σ_rows r·f(p) = Σ_g s_r·f(p)
   */
  readonly groups: (x: MeasureContext) => Aggregate;
  /**
   * The same measure over one row held in memory: the term the row adds (the value it offers, for a
   * minimum or maximum), or null when the row is outside the measure's row set. The per-check test builder
   * (test/core/checks/build.ts) fills cells from it; test/core/cube-measures.test.ts holds it to the SQL.
   */
  readonly term: (row: MeasureRow, x: MeasureContext) => number | null;
  /**
   * The same as `groups` over one (cell keys, p) group held in memory: the term the group adds (the value it
   * offers, for a minimum or maximum), or null when the group is outside the aggregate's filter. An audit
   * merged from parts (app/core/parts/merge.ts, replayCube) forms the cube from it as the cube query does.
   */
  readonly group: (g: MeasureGroup, x: MeasureContext) => number | null;
}

/** One (cell keys, p) group as the grouped cube query's `g` level holds it (app/core/scan/cube.ts). */
export interface MeasureGroup {
  readonly p: number | null;
  readonly c: number;
  readonly c_r: number;
  readonly s_r: number;
  readonly s_r2: number;
  readonly s_d: number;
  readonly s_d2: number;
}

/** One row as the cube's base projection reads it: p, r, and d = r − shift; null where the log holds none. */
export interface MeasureRow {
  readonly p: number | null;
  readonly r: number | null;
  readonly d: number | null;
}

/** The row sets over the base columns p, r and q, in the cube's dialect. */
const PV = (x: MeasureContext) => validPropensity('p', x.d);
const VR = (x: MeasureContext) => finiteReward('r', x.d);
const RW = (x: MeasureContext) => `${PV(x)} AND ${VR(x)}`;
const VALID_Q = (x: MeasureContext) => `(q >= 0 AND q <= 1 AND NOT ${x.d.isNaN('q')})`;
const QV = (x: MeasureContext) => `${PV(x)} AND ${VALID_Q(x)}`;
const QRW = (x: MeasureContext) => `${RW(x)} AND ${VALID_Q(x)}`;

// The row sets above, over a row in memory (validPropensity and finiteReward in app/core/scan/expressions.ts).
const validP = (p: number | null): p is number => p !== null && p > 0 && p <= 1 && !Number.isNaN(p);
const validR = (r: number | null): r is number => r !== null && Number.isFinite(r);
/** `value` where the row's propensity is valid and (with `rewarded`) its reward finite, else null. */
const onValid = (value: (p: number, r: number, d: number) => number, rewarded: boolean) => ({ p, r, d }: MeasureRow): number | null =>
  validP(p) && (!rewarded || validR(r)) ? value(p, r as number, d as number) : null;
/** `value` where the reward is finite, whatever the propensity. */
const onReward = (value: (r: number, d: number) => number) => ({ r, d }: MeasureRow): number | null => (validR(r) ? value(r, d as number) : null);
/** `value` of a group where its propensity is valid (the groups' filter PV), else null; `always`: every group. */
const gValid = (value: (g: MeasureGroup, p: number) => number) => (g: MeasureGroup): number | null => (validP(g.p) ? value(g, g.p) : null);
const always = (value: (g: MeasureGroup) => number) => (g: MeasureGroup): number | null => value(g);
const when = (holds: (row: MeasureRow, x: MeasureContext) => boolean) => (row: MeasureRow, x: MeasureContext): number | null => (holds(row, x) ? 1 : null);

/** rows where `where` holds: over rows a count, over groups a sum of group sizes */
const rowCount = (where?: string): Aggregate => ({ sum: '1', integral: true, ...(where ? { where } : {}) });
const groupCount = (where?: string): Aggregate => ({ sum: 'c', integral: true, ...(where ? { where } : {}) });
const sum = (term: string, where?: string): Aggregate => ({ sum: term, ...(where ? { where } : {}) });

/** A count of rows satisfying `where` (a condition on p only, so it holds for a whole (keys, p) group). */
function count<F extends string>(field: F, column: string, where: (x: MeasureContext) => string | undefined, holds: (row: MeasureRow, x: MeasureContext) => boolean): Measure<F, 'sum'> {
  return {
    field, column, merge: 'sum', rows: (x) => rowCount(where(x)), groups: (x) => groupCount(where(x)), term: when(holds),
    group: (g, x) => (holds({ p: g.p, r: null, d: null }, x) ? g.c : null),
  };
}

function measure<F extends string, M extends Merge>(field: F, column: string, merge: M, rows: (x: MeasureContext) => Aggregate, groups: (x: MeasureContext) => Aggregate, term: Measure['term'], group: Measure['group']): Measure<F, M> {
  return { field, column, merge, rows, groups, term, group };
}

/** The measures of every cell, in the cube query's column order. */
export const CELL_MEASURES = [
  count('n', 'n', () => undefined, () => true),
  count('nPNull', 'n_p_null', () => 'p IS NULL', ({ p }) => p === null),
  count('nPNaN', 'n_p_nan', (x) => x.d.isNaN('p'), ({ p }) => p !== null && Number.isNaN(p)),
  count('nPNonPositive', 'n_p_nonpos', () => 'p <= 0', ({ p }) => p !== null && p <= 0),
  count('nPAboveOne', 'n_p_above', (x) => `p > 1 AND NOT ${x.d.isNaN('p')}`, ({ p }) => p !== null && p > 1),
  count('nPOne', 'n_p_one', () => 'p = 1', ({ p }) => p === 1),
  count('nPBelowFloor', 'n_p_floor', (x) => `${PV(x)} AND p < ${x.d.double(x.floor)}`, ({ p }, x) => validP(p) && p < x.floor),
  measure('nRNull', 'n_r_null', 'sum', (x) => rowCount(x.d.notTrue(VR(x))), () => ({ sum: 'c - c_r', integral: true }), when(({ r }) => !validR(r)), always((g) => g.c - g.c_r)),
  count('nP', 'n_p', PV, ({ p }) => validP(p)),
  measure('sumInvP', 's_ip', 'sum', (x) => sum('1 / p', PV(x)), (x) => sum('c / p', PV(x)), onValid((p) => 1 / p, false), gValid((g, p) => g.c / p)),
  measure('sumInvP2', 's_ip2', 'sum', (x) => sum('1 / (p * p)', PV(x)), (x) => sum('c / (p * p)', PV(x)), onValid((p) => 1 / (p * p), false), gValid((g, p) => g.c / (p * p))),
  measure('minP', 'min_p', 'min', (x) => ({ min: 'p', where: PV(x) }), (x) => ({ min: 'p', where: PV(x) }), onValid((p) => p, false), gValid((_, p) => p)),
  measure('maxP', 'max_p', 'max', (x) => ({ max: 'p', where: PV(x) }), (x) => ({ max: 'p', where: PV(x) }), onValid((p) => p, false), gValid((_, p) => p)),
  measure('nRw', 'n_rw', 'sum', (x) => rowCount(RW(x)), (x) => ({ sum: 'c_r', where: PV(x), integral: true }), onValid(() => 1, true), gValid((g) => g.c_r)),
  measure('sumInvPRw', 's_ip_rw', 'sum', (x) => sum('1 / p', RW(x)), (x) => sum('c_r / p', PV(x)), onValid((p) => 1 / p, true), gValid((g, p) => g.c_r / p)),
  measure('sumInvP2Rw', 's_ip2_rw', 'sum', (x) => sum('1 / (p * p)', RW(x)), (x) => sum('c_r / (p * p)', PV(x)), onValid((p) => 1 / (p * p), true), gValid((g, p) => g.c_r / (p * p))),
  measure('sumR', 's_r', 'sum', (x) => sum('r', RW(x)), (x) => sum('s_r', PV(x)), onValid((_, r) => r, true), gValid((g) => g.s_r)),
  measure('sumR2', 's_r2', 'sum', (x) => sum('r * r', RW(x)), (x) => sum('s_r2', PV(x)), onValid((_, r) => r * r, true), gValid((g) => g.s_r2)),
  measure('sumRInvP', 's_rip', 'sum', (x) => sum('r / p', RW(x)), (x) => sum('s_r / p', PV(x)), onValid((p, r) => r / p, true), gValid((g, p) => g.s_r / p)),
  measure('sumRInvP2', 's_rip2', 'sum', (x) => sum('r / (p * p)', RW(x)), (x) => sum('s_r / (p * p)', PV(x)), onValid((p, r) => r / (p * p), true), gValid((g, p) => g.s_r / (p * p))),
  measure('sumR2InvP2', 's_r2ip2', 'sum', (x) => sum('r * r / (p * p)', RW(x)), (x) => sum('s_r2 / (p * p)', PV(x)), onValid((p, r) => (r * r) / (p * p), true), gValid((g, p) => g.s_r2 / (p * p))),
  measure('nRAll', 'n_rall', 'sum', (x) => rowCount(VR(x)), () => ({ sum: 'c_r', integral: true }), onReward(() => 1), always((g) => g.c_r)),
  measure('sumRAll', 's_rall', 'sum', (x) => sum('r', VR(x)), () => sum('s_r'), onReward((r) => r), always((g) => g.s_r)),
  measure('sumR2All', 's_r2all', 'sum', (x) => sum('r * r', VR(x)), () => sum('s_r2'), onReward((r) => r * r), always((g) => g.s_r2)),
  /**
   * Centred reward sums, d = r − shift with the cube's one shift (the middle of the reward's range):
   * a variance formed from them, Σd² − (Σd)²/n, does not cancel as Σr² − (Σr)²/n does when the mean is
   * large against the spread (Chan, Golub & LeVeque 1983, "Algorithms for computing the sample variance").
   */
  measure('sumD', 's_d', 'sum', (x) => sum('d', RW(x)), (x) => sum('s_d', PV(x)), onValid((_, __, d) => d, true), gValid((g) => g.s_d)),
  measure('sumD2', 's_d2', 'sum', (x) => sum('d * d', RW(x)), (x) => sum('s_d2', PV(x)), onValid((_, __, d) => d * d, true), gValid((g) => g.s_d2)),
  /** the same over the rewarded rows weighted by 1/p and 1/p², for the IPS, SNIPS and DR standard errors */
  measure('sumDInvP', 's_dip', 'sum', (x) => sum('d / p', RW(x)), (x) => sum('s_d / p', PV(x)), onValid((p, __, d) => d / p, true), gValid((g, p) => g.s_d / p)),
  measure('sumDInvP2', 's_dip2', 'sum', (x) => sum('d / (p * p)', RW(x)), (x) => sum('s_d / (p * p)', PV(x)), onValid((p, __, d) => d / (p * p), true), gValid((g, p) => g.s_d / (p * p))),
  measure('sumD2InvP', 's_d2ip', 'sum', (x) => sum('d * d / p', RW(x)), (x) => sum('s_d2 / p', PV(x)), onValid((p, __, d) => (d * d) / p, true), gValid((g, p) => g.s_d2 / p)),
  measure('sumD2InvP2', 's_d2ip2', 'sum', (x) => sum('d * d / (p * p)', RW(x)), (x) => sum('s_d2 / (p * p)', PV(x)), onValid((p, __, d) => (d * d) / (p * p), true), gValid((g, p) => g.s_d2 / (p * p))),
  measure('sumDAll', 's_dall', 'sum', (x) => sum('d', VR(x)), () => sum('s_d'), onReward((_, d) => d), always((g) => g.s_d)),
  measure('sumD2All', 's_d2all', 'sum', (x) => sum('d * d', VR(x)), () => sum('s_d2'), onReward((_, d) => d * d), always((g) => g.s_d2)),
] as const;

/** Row-level only: a target-propensity column makes the cube read every row. */
const rowsOnly = <F extends string>(field: F, column: string, rows: (x: MeasureContext) => Aggregate): Measure<F, 'sum'> => ({
  field, column, merge: 'sum', rows, groups: () => { throw new Error(`cube measure ${field} has no propensity-grouped form`); },
  term: () => { throw new Error(`cube measure ${field} reads a target_propensity column, which rows in memory do not carry`); },
  group: () => { throw new Error(`cube measure ${field} has no propensity-grouped form`); },
});

/** Sums for a mapped target_propensity column q (row weight q/p), same row sets; on cell.target. */
export const TARGET_MEASURES = [
  rowsOnly('nInvalid', 't_n_invalid', (x) => rowCount(x.d.notTrue(VALID_Q(x)))),
  rowsOnly('sumW', 't_sw', (x) => sum('q / p', QV(x))),
  rowsOnly('sumW2', 't_sw2', (x) => sum('q * q / (p * p)', QV(x))),
  rowsOnly('sumWRw', 't_sw_rw', (x) => sum('q / p', QRW(x))),
  rowsOnly('sumW2Rw', 't_sw2_rw', (x) => sum('q * q / (p * p)', QRW(x))),
  rowsOnly('sumWR', 't_swr', (x) => sum('q * r / p', QRW(x))),
  rowsOnly('sumW2R', 't_sw2r', (x) => sum('q * q * r / (p * p)', QRW(x))),
  rowsOnly('sumW2R2', 't_sw2r2', (x) => sum('q * q * r * r / (p * p)', QRW(x))),
] as const;

/** Fields computed from other fields of the same cell when it is parsed; they merge as sums. */
export const DERIVED_MEASURES = [
  /** invalid propensities of any kind: null (or unparseable), NaN, <= 0, > 1 */
  { field: 'nPInvalid', of: ['nPNull', 'nPNaN', 'nPNonPositive', 'nPAboveOne'] },
] as const;

type FieldOf<T extends readonly { readonly field: string }[]> = T[number]['field'];
type MergeOf<T, F> = T extends Measure<infer G, infer M> ? (G extends F ? M : never) : never;

export type CellMeasureField = FieldOf<typeof CELL_MEASURES> | FieldOf<typeof DERIVED_MEASURES>;
export type TargetMeasureField = FieldOf<typeof TARGET_MEASURES>;
export type ExtremumField = { [K in FieldOf<typeof CELL_MEASURES>]: MergeOf<(typeof CELL_MEASURES)[number], K> extends 'sum' ? never : K }[FieldOf<typeof CELL_MEASURES>];
export type SumField = Exclude<CellMeasureField, ExtremumField>;

/** Every summed field of a cell, in cell order (query columns first, then the derived ones). */
export const SUM_FIELDS: readonly SumField[] = [
  ...CELL_MEASURES.filter((m) => m.merge === 'sum').map((m) => m.field as SumField),
  ...DERIVED_MEASURES.map((d) => d.field),
];
export const MIN_FIELDS: readonly ExtremumField[] = CELL_MEASURES.filter((m) => m.merge === 'min').map((m) => m.field as ExtremumField);
export const MAX_FIELDS: readonly ExtremumField[] = CELL_MEASURES.filter((m) => m.merge === 'max').map((m) => m.field as ExtremumField);
export const TARGET_FIELDS: readonly TargetMeasureField[] = TARGET_MEASURES.map((m) => m.field);

/*
 * Objects built by assigning two dozen computed keys one by one fall into V8's slow dictionary mode,
 * which makes every later read of a field several times slower; a spread copy of a template is a
 * plain fast object. Cells, totals and target sums are therefore made as copies of these templates.
 */
const template = (keys: readonly string[], value: unknown): Readonly<Record<string, unknown>> => Object.fromEntries(keys.map((k) => [k, value]));
const CELL_TEMPLATE = template(['segment', 'action', 'version', 'bucket', ...CELL_MEASURES.map((m) => m.field), ...DERIVED_MEASURES.map((d) => d.field), 'target'], null);
const TOTALS_TEMPLATE = template([...SUM_FIELDS, ...MIN_FIELDS, ...MAX_FIELDS, 'target'], null);
const TARGET_TEMPLATE = template(TARGET_FIELDS, 0);

/** A new cell object with every key in cell order, to be filled in. */
export const blankCell = (): Record<string, unknown> => ({ ...CELL_TEMPLATE });
/** A new totals object (sums, minima, maxima, target), to be filled in. */
export const blankTotals = (): Record<string, unknown> => ({ ...TOTALS_TEMPLATE });
/** A new target-sums object, to be filled in. */
export const blankTargetSums = (): Record<string, number> => ({ ...TARGET_TEMPLATE }) as Record<string, number>;
