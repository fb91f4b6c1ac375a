/**
 * The sufficient-statistics cube (DEVELOPERS.md, "The scans of one audit"): ONE scan grouped by (segment values, action,
 * policy version, time bucket). Segment columns over the cap keep their most frequent values and
 * fold the rest into "(other)" inside the same statement, by merging cells (sums add, mins and
 * maxes combine), so capping costs no extra scan.
 */
import { blankCell, blankTargetSums, CELL_MEASURES, DERIVED_MEASURES, TARGET_MEASURES, type Aggregate, type Measure, type Merge } from '../cube/measures.ts';
import type { CubeCell } from '../cube/types.ts';
import type { Dialect } from '../sql/dialect.ts';
import { duckdb } from '../sql/dialect-duckdb.ts';
import { double, integer, literal } from '../sql/quote.ts';
import { cubeScalesSqlClickHouse, cubeSqlClickHouse, finishExactSums, parseCubeScales } from './cube-clickhouse.ts';
import type { Table } from '../table.ts';
import type { ColumnProfile } from './profile.ts';
import { NULL_LABEL, OTHER_LABEL, VALID_R, type RowExpressions } from './expressions.ts';

export interface CubeSpec {
  readonly relation: string;
  readonly rows: RowExpressions;
  /** Segment positions to cap at `cap` values. */
  readonly capped: readonly number[];
  readonly cap: number;
  readonly floor: number;
  /**
   * Group the rows by (cell keys, p) first and derive every statistic from those groups: exact for any
   * log, and much cheaper when propensities take few distinct values (a few aggregates per row instead
   * of two dozen). Ignored when a target-propensity column is mapped.
   */
  readonly byPropensity?: boolean;
  /**
   * With byPropensity: group the rows by (cell keys, p, r) first, counting them, and form each (keys, p)
   * group's Σd and Σd² from those groups as Σ rows·round(term·2^s): the same integers the row-level sums add,
   * so the same doubles, for one count a row instead of two HUGEINT sums. Pays off when the reward takes few
   * distinct values (groupsByReward); ignored without a finite reward range.
   */
  readonly byReward?: boolean;
  /** The reward's shift for the centred sums and a bound on |r − shift| (rewardShift); none: shift 0. */
  readonly reward?: RewardShift | null;
  /** Rows of the log (the profile's count), which bounds the row-level fixed-point sums. */
  readonly rowCount?: number;
  /** the SQL dialect to write (DuckDB when absent); the rows' expressions must be in the same one */
  readonly dialect?: Dialect;
  /**
   * A temporary table made from cubeGroupsSelect(spec) (the log's rows grouped by cell keys, p and r, with
   * their count nr): the cube reads it as its by_r level instead of grouping the log's rows again. Needs
   * byPropensity, byReward and a finite reward range (cubeReadsGroups).
   */
  readonly groups?: string;
}

/** Propensity-level grouping pays off while the distinct propensities stay this few. */
const BY_PROPENSITY_MAX_DISTINCT = 100_000;

/**
 * Whether the cube (and the tails) group rows by propensity first: when the profile counted the
 * propensity column's distinct values over the whole log and found few. A count over the first rows
 * only means more than profile.ts's EXACT_DISTINCT_MAX among them: a continuous propensity.
 */
export function groupsByPropensity(propensity: ColumnProfile | undefined): boolean {
  return !!propensity && propensity.distinctBasis === 'all rows' && propensity.distinct <= BY_PROPENSITY_MAX_DISTINCT;
}

/** Rewards grouped first (CubeSpec.byReward) while the reward column takes this few distinct values. */
const BY_REWARD_MAX_DISTINCT = 1_000;

/** Whether the cube groups rows by reward too: the profile counted the reward column's distinct values over every row and found few. */
export function groupsByReward(reward: ColumnProfile | undefined): boolean {
  return !!reward && reward.distinctBasis === 'all rows' && reward.distinct <= BY_REWARD_MAX_DISTINCT;
}

/**
 * The reward's shift for the centred sums (d = r − shift) and a bound on |d|, from the profile's range of
 * the reward column over every row. Null when the profile has no finite range (rewards parsed from text):
 * the shift is then 0 and the row-level reward sums are plain floating-point sums.
 */
export interface RewardShift {
  readonly shift: number;
  readonly halfRange: number;
}

export function rewardShift(reward: ColumnProfile | undefined): RewardShift | null {
  if (reward?.kind === 'boolean') return { shift: 0.5, halfRange: 0.5 };
  if (!reward || reward.min === null || reward.max === null || !Number.isFinite(reward.min) || !Number.isFinite(reward.max)) return null;
  const shift = reward.min / 2 + reward.max / 2;
  const halfRange = Math.max(reward.max - shift, shift - reward.min);
  return Number.isFinite(halfRange) ? { shift, halfRange } : null;
}

/*
 * Exact sums. Every non-integral sum is accumulated in fixed point: each term x becomes the integer
 * x·2^s (HUGEINT) and the integers are added, which is exact and so independent of the order in which
 * threads, row groups, files or engines deliver the rows; the total is turned back into a double once.
 * 2^s is the largest power of two that keeps (count + 1)·max|x|·2^s below 2^124, so nothing overflows;
 * a term is represented exactly when it is at least 2^(52−s) (for the largest term, about 2^-72 of it or
 * better), and smaller terms are rounded to a multiple of 2^-s. A term that is not finite makes its sum
 * a plain floating-point sum (that sum is then ±∞ or NaN anyway).
 */
const HEADROOM = 124;

/** 2^s for a sum of terms bounded by `bound` over `count` rows, as SQL over the scale's source. */
function scaleSql(bound: string, count: string): string {
  return `CASE WHEN isfinite(${bound}) THEN CAST(pow(2, least(1000, greatest(-1000, floor(${HEADROOM} - log2(${count} + 1) - log2(greatest(${bound}, 1e-300)))))) AS DOUBLE) END`;
}

/** The same power of two computed here, for a bound known before the query (the reward's range). */
function scaleLiteral(bound: number, count: number): string {
  const s = Math.min(1000, Math.max(-1000, Math.floor(HEADROOM - Math.log2(count + 1) - Math.log2(Math.max(bound, 1e-300)))));
  return double(2 ** s);
}

const filtered = (where: string | undefined) => (where ? ` FILTER (WHERE ${where})` : '');

/** An aggregate as SQL; a non-integral sum reads its scale from column `k_<alias>` of the scale CTE. */
function aggregateSql(agg: Aggregate, alias: string): string {
  if ('min' in agg) return `min(${agg.min})${filtered(agg.where)}`;
  if ('max' in agg) return `max(${agg.max})${filtered(agg.where)}`;
  if (agg.integral) return agg.sum === '1' ? `count(*)${filtered(agg.where)}::DOUBLE` : `coalesce(sum(${agg.sum})${filtered(agg.where)}, 0)::DOUBLE`;
  const k = `k_${alias}`;
  const term = agg.where ? `CASE WHEN ${agg.where} THEN (${agg.sum}) * ${k} END` : `(${agg.sum}) * ${k}`;
  return `coalesce(CAST(sum(CAST(${term} AS HUGEINT)) AS DOUBLE) / max(${k}), sum(${agg.sum})${filtered(agg.where)}, 0)::DOUBLE`;
}

/** The scale CTE's column for one non-integral sum (null for every other aggregate). */
function scaleColumn(agg: Aggregate, alias: string): string | null {
  if (!('sum' in agg) || agg.integral) return null;
  return `${scaleSql(`coalesce(max(abs(${agg.sum}))${filtered(agg.where)}, 0)`, 'count(*)')} AS k_${alias}`;
}

/** The SELECT list of an aggregation, and the scale CTE over its source (null when nothing needs one). */
function aggregation(list: readonly (readonly [string, Aggregate])[], source: string, scaleName: string): { selects: string[]; scale: string | null } {
  const scales = list.map(([alias, agg]) => scaleColumn(agg, alias)).filter((x): x is string => x !== null);
  return {
    selects: list.map(([alias, agg]) => `${aggregateSql(agg, alias)} AS ${alias}`),
    scale: scales.length ? `${scaleName} AS (\n  SELECT ${scales.join(',\n    ')}\n  FROM ${source}\n)` : null,
  };
}

/** The measures over rows or over (keys, p) groups, from the measures table. */
function measureList(spec: CubeSpec, grouped: boolean): [string, Aggregate, Merge][] {
  const x = { floor: spec.floor, d: duckdb };
  const measures: readonly Measure[] = !grouped && spec.rows.targetPropensity ? [...CELL_MEASURES, ...TARGET_MEASURES] : CELL_MEASURES;
  return measures.map((m) => [m.column, grouped ? m.groups(x) : m.rows(x), m.merge]);
}

/**
 * The statement a dialect must run before the cube query (null for DuckDB, whose cube query is one
 * statement): on ClickHouse, the fixed-point scales. Its result goes to cubeSql.
 */
export function cubePreludeSql(spec: CubeSpec): string | null {
  return spec.dialect?.name === 'clickhouse' ? cubeScalesSqlClickHouse(spec) : null;
}

/** The base columns of the cube's rows: segments s0…, action a, version v, bucket b, propensity p, reward r (and q). */
function baseColumns(rows: RowExpressions): string[] {
  return [
    ...rows.segments.map((e, i) => `${e} AS s${i}`),
    `${rows.action} AS a`,
    `${rows.version ?? "''"} AS v`,
    `${rows.bucket} AS b`,
    `${rows.propensity} AS p`,
    `${rows.reward} AS r`,
    ...(rows.targetPropensity ? [`${rows.targetPropensity} AS q`] : []),
  ];
}

/**
 * Whether the cube can read a table of row groups (CubeSpec.groups): DuckDB, rows grouped by propensity and by
 * reward with a finite reward range, and no target-propensity column (whose q is a per-row value).
 */
export function cubeReadsGroups(spec: Pick<CubeSpec, 'rows' | 'byPropensity' | 'byReward' | 'reward' | 'dialect'>): boolean {
  return (!spec.dialect || spec.dialect.name === 'duckdb') && !!spec.byPropensity && !!spec.byReward && !!spec.reward && !spec.rows.targetPropensity;
}

/**
 * The log's rows grouped by (segment values, action, version, bucket, p, r), each group's rows counted in nr:
 * the cube query's by_r level as a statement of its own, for a temporary table that the cube, the tails and
 * the clip rows read instead of the log (cubeSql, tailSql and clipRowsSql with `groups`). Identical rows, so
 * each statement's answer over the groups, a group counting nr times, is its answer over the rows.
 */
export function cubeGroupsSelect(spec: Pick<CubeSpec, 'relation' | 'rows'>): string {
  const keys = [...spec.rows.segments.map((_, i) => `s${i}`), 'a', 'v', 'b', 'p', 'r'].join(', ');
  return `SELECT ${keys}, count(*) AS nr FROM (SELECT ${baseColumns(spec.rows).join(', ')} FROM ${spec.relation}) AS base GROUP BY ${keys}`;
}

/** The columns of a groups table as row expressions (the tails' and clip rows' statements read it as a log). */
export function groupRows(rows: RowExpressions): RowExpressions {
  return { ...rows, segments: rows.segments.map((_, i) => `s${i}`), action: 'a', version: rows.version === null ? null : 'v', bucket: 'b', propensity: 'p', reward: 'r' };
}

export function cubeSql(spec: CubeSpec, prelude: Table | null = null): string {
  if (spec.dialect && spec.dialect.name !== 'duckdb') {
    if (spec.dialect.name === 'clickhouse') return cubeSqlClickHouse(spec, parseCubeScales(prelude));
    throw new Error(`no cube query for the ${spec.dialect.name} dialect`);
  }
  const { rows } = spec;
  const segs = rows.segments.map((_, i) => `s${i}`);
  const keys = [...segs, 'a', 'v', 'b'];
  const groupKeys = keys.join(', ');
  const reward = spec.reward ?? null;
  const shift = double(reward?.shift ?? 0);
  const base = baseColumns(rows);
  const grouped = !!spec.byPropensity && !rows.targetPropensity;
  const list = measureList(spec, grouped);
  const ctes: string[] = [];
  if (spec.groups && !cubeReadsGroups(spec)) throw new Error('the cube reads a groups table only with rows grouped by propensity and reward and a finite reward range');
  if (grouped) {
    if (!spec.groups) ctes.push(`base AS (\n  SELECT ${base.join(', ')}\n  FROM ${spec.relation}\n)`);
    // Σd and Σd² of each (keys, p) group are row-level sums: fixed point, scaled by the reward's range
    const rowCount = spec.rowCount ?? 2 ** 40;
    const rowSum = (x: string, bound: number | null) => {
      if (bound === null) return `coalesce(sum(${x}), 0)::DOUBLE`;
      const k = scaleLiteral(bound, rowCount);
      return `coalesce(CAST(sum(CAST(${x} * ${k} AS HUGEINT)) AS DOUBLE) / ${k}, 0)::DOUBLE`;
    };
    // twice the half range: r − shift may round a little past it
    const h = reward ? 2 * reward.halfRange : null;
    if (spec.byReward && h !== null) {
      // rows sharing (keys, p, r) add the same integer each: Σ rows·round(d·2^s) is the row-level sum exactly
      const groupSum = (x: string, bound: number) => {
        const k = scaleLiteral(bound, rowCount);
        return `coalesce(CAST(sum(CAST(${x} * ${k} AS HUGEINT) * nr) AS DOUBLE) / ${k}, 0)::DOUBLE`;
      };
      ctes.push(
        spec.groups ? `by_r AS (SELECT * FROM ${spec.groups})` : `by_r AS (\n  SELECT ${groupKeys}, p, r, count(*) AS nr FROM base GROUP BY ${groupKeys}, p, r\n)`,
        `by_p AS (\n  SELECT ${groupKeys}, p, sum(nr)::DOUBLE AS c, coalesce(sum(nr) FILTER (WHERE dd IS NOT NULL), 0)::DOUBLE AS c_r, ${groupSum('dd', h)} AS s_d, ${groupSum('dd * dd', h * h)} AS s_d2\n`
          + `  FROM (SELECT *, CASE WHEN ${VALID_R} THEN r - ${shift} END AS dd FROM by_r) GROUP BY ${groupKeys}, p\n)`,
      );
    } else {
      ctes.push(
        `by_p AS (\n  SELECT ${groupKeys}, p, count(*)::DOUBLE AS c, count(dd)::DOUBLE AS c_r, ${rowSum('dd', h)} AS s_d, ${rowSum('dd * dd', h === null ? null : h * h)} AS s_d2\n`
          + `  FROM (SELECT *, CASE WHEN ${VALID_R} THEN r - ${shift} END AS dd FROM base) GROUP BY ${groupKeys}, p\n)`,
      );
    }
    ctes.push(
      `g AS (SELECT *, s_d + ${shift} * c_r AS s_r, s_d2 + 2 * ${shift} * s_d + ${shift} * ${shift} * c_r AS s_r2 FROM by_p)`,
    );
    const { selects, scale } = aggregation(list.map(([a, agg]) => [a, agg] as const), 'g', 'k_g');
    if (scale) ctes.push(scale);
    ctes.push(`raw AS (\n  SELECT ${groupKeys},\n    ${selects.join(',\n    ')}\n  FROM g${scale ? ', k_g' : ''} GROUP BY ${groupKeys}\n)`);
  } else {
    ctes.push(`base AS (\n  SELECT ${[...base, `r - ${shift} AS d`].join(', ')}\n  FROM ${spec.relation}\n)`);
    const { selects, scale } = aggregation(list.map(([a, agg]) => [a, agg] as const), 'base', 'k_rows');
    if (scale) ctes.push(scale);
    ctes.push(`raw AS (\n  SELECT ${groupKeys},\n    ${selects.join(',\n    ')}\n  FROM base${scale ? ', k_rows' : ''} GROUP BY ${groupKeys}\n)`);
  }
  if (spec.capped.length > 0) {
    for (const i of spec.capped) {
      ctes.push(`top_s${i} AS (SELECT s${i} FROM raw GROUP BY s${i} ORDER BY sum(n) DESC, s${i} LIMIT ${integer(spec.cap)})`);
    }
    const capKeys = keys.map((k) => {
      const i = segs.indexOf(k);
      return spec.capped.includes(i) ? `CASE WHEN s${i} IN (SELECT s${i} FROM top_s${i}) THEN s${i} ELSE ${literal(OTHER_LABEL)} END AS s${i}` : k;
    });
    ctes.push(`capped AS (\n  SELECT ${capKeys.join(', ')}, ${list.map(([a]) => a).join(', ')} FROM raw\n)`);
    // merging cells: counts add exactly, other sums in fixed point again, minima and maxima combine
    const merge = list.map(([a, agg, how]): readonly [string, Aggregate] => {
      if (how === 'min') return [a, { min: a, where: 'true' }];
      if (how === 'max') return [a, { max: a, where: 'true' }];
      return [a, 'sum' in agg && agg.integral ? { sum: a, integral: true } : { sum: a }];
    });
    const { selects, scale } = aggregation(merge, 'capped', 'k_capped');
    if (scale) ctes.push(scale);
    ctes.push(`merged AS (\n  SELECT ${groupKeys}, ${selects.join(', ')} FROM capped${scale ? ', k_capped' : ''} GROUP BY ${groupKeys}\n)`);
    // the distinct values a capped column had before capping, counted exactly from the uncapped cells
    const counts = spec.capped.map((i) => `(SELECT count(DISTINCT s${i}) FILTER (WHERE s${i} <> ${literal(NULL_LABEL)}) FROM raw)::DOUBLE AS d_s${i}`);
    return `WITH ${ctes.join(',\n')}\nSELECT *, ${counts.join(', ')} FROM merged\nORDER BY ${groupKeys}`;
  }
  return `WITH ${ctes.join(',\n')}\nSELECT * FROM raw\nORDER BY ${groupKeys}`;
}

function nums(table: Table, name: string): readonly (number | null)[] {
  const j = table.names.indexOf(name);
  if (j < 0) throw new Error(`cube result lacks column ${name}`);
  return (table.columns[j] as readonly unknown[]).map((v) => (v === null ? null : Number(v)));
}

/** Distinct values of each capped segment column before capping (the cube's d_s{i} columns), by position. */
export function parseCappedDistinct(table: Table, capped: readonly number[]): Map<number, number> {
  const out = new Map<number, number>();
  for (const i of capped) {
    const j = table.names.indexOf(`d_s${i}`);
    const v = j < 0 ? undefined : (table.columns[j] as readonly unknown[])[0];
    if (v !== undefined && v !== null) out.set(i, Number(v));
  }
  return out;
}

export function parseCube(result: Table, segmentCount: number): CubeCell[] {
  // a dialect without 128-bit integers answers its exact sums as limbs (cube-clickhouse.ts)
  const table = finishExactSums(result);
  const col = (name: string) => table.columns[table.names.indexOf(name)] as readonly unknown[];
  const segCols = Array.from({ length: segmentCount }, (_, i) => col(`s${i}`));
  const a = col('a');
  const v = col('v');
  const b = nums(table, 'b');
  const cellColumns = CELL_MEASURES.map((m) => [m.field, m.merge, nums(table, m.column)] as const);
  const hasTarget = table.names.includes(TARGET_MEASURES[0].column);
  const targetColumns = hasTarget ? TARGET_MEASURES.map((m) => [m.field, nums(table, m.column)] as const) : null;
  const cells: CubeCell[] = [];
  for (let i = 0; i < table.rowCount; i++) {
    const cell = blankCell();
    cell.segment = segCols.map((c) => String(c[i]));
    cell.action = String(a[i]);
    cell.version = String(v[i] ?? '');
    cell.bucket = b[i] ?? 0;
    // an empty sum is 0; an empty minimum or maximum is null
    for (const [field, merge, values] of cellColumns) cell[field] = values[i] ?? (merge === 'sum' ? 0 : null);
    for (const d of DERIVED_MEASURES) cell[d.field] = d.of.reduce((s, f) => s + (cell[f] as number), 0);
    let target: Record<string, number> | null = null;
    if (targetColumns) {
      target = blankTargetSums();
      for (const [field, values] of targetColumns) target[field] = values[i] ?? 0;
    }
    cell.target = target;
    cells.push(cell as unknown as CubeCell);
  }
  return cells;
}
