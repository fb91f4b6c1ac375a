/**
 * The sufficient-statistics cube (DEVELOPERS.md, "The scans of one audit"): ONE scan grouped by (segment values, action,
 * policy version, time bucket). Segment columns over the cap keep their most frequent values and
 * fold the rest into "(other)" inside the same statement, by merging cells (sums add, mins and
 * maxes combine), so capping costs no extra scan.
 */
import { blankCell, blankTargetSums, CELL_MEASURES, DERIVED_MEASURES, TARGET_MEASURES, type Measure, type Merge } from '../cube/measures.ts';
import type { CubeCell } from '../cube/types.ts';
import { integer, literal } from '../sql/quote.ts';
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
}

/** Propensity-level grouping pays off while the distinct propensities stay this few. */
export const BY_PROPENSITY_MAX_DISTINCT = 100_000;

/**
 * Whether the cube (and the tails) group rows by propensity first: when the profile counted the
 * propensity column's distinct values over the whole log and found few. A count over the first rows
 * only means more than profile.ts's EXACT_DISTINCT_MAX among them: a continuous propensity.
 */
export function groupsByPropensity(propensity: ColumnProfile | undefined): boolean {
  return !!propensity && propensity.distinctBasis === 'all rows' && propensity.distinct <= BY_PROPENSITY_MAX_DISTINCT;
}

/** [alias, aggregate over the base rows, how cells merge], from the measures table */
function aggregates(spec: CubeSpec): [string, string, Merge][] {
  const x = { floor: spec.floor };
  const measures: readonly Measure[] = spec.rows.targetPropensity ? [...CELL_MEASURES, ...TARGET_MEASURES] : CELL_MEASURES;
  return measures.map((m) => [m.column, m.rows(x), m.merge]);
}

/** The same aggregates over groups of rows sharing (cell keys, p) (Measure.groups). */
function byPropensityAggregates(spec: CubeSpec): [string, string][] {
  const x = { floor: spec.floor };
  return CELL_MEASURES.map((m) => [m.column, m.groups(x)]);
}

export function cubeSql(spec: CubeSpec): string {
  const { rows } = spec;
  const segs = rows.segments.map((_, i) => `s${i}`);
  const keys = [...segs, 'a', 'v', 'b'];
  const base = [
    ...rows.segments.map((e, i) => `${e} AS s${i}`),
    `${rows.action} AS a`,
    `${rows.version ?? "''"} AS v`,
    `${rows.bucket} AS b`,
    `${rows.propensity} AS p`,
    `${rows.reward} AS r`,
    ...(rows.targetPropensity ? [`${rows.targetPropensity} AS q`] : []),
  ];
  const aggs = aggregates(spec);
  const ctes = [`base AS (\n  SELECT ${base.join(', ')}\n  FROM ${spec.relation}\n)`];
  if (spec.byPropensity && !rows.targetPropensity) {
    const fine = byPropensityAggregates(spec);
    ctes.push(
      `by_p AS (\n  SELECT ${keys.join(', ')}, p, count(*)::DOUBLE AS c, count(rr)::DOUBLE AS c_r, coalesce(sum(rr), 0)::DOUBLE AS s_r, coalesce(sum(rr * rr), 0)::DOUBLE AS s_r2\n`
        + `  FROM (SELECT *, CASE WHEN ${VALID_R} THEN r END AS rr FROM base) GROUP BY ${keys.join(', ')}, p\n)`,
      `raw AS (\n  SELECT ${keys.join(', ')},\n    ${fine.map(([alias, expr]) => `${expr} AS ${alias}`).join(',\n    ')}\n  FROM by_p GROUP BY ${keys.join(', ')}\n)`,
    );
  } else {
    ctes.push(`raw AS (\n  SELECT ${keys.join(', ')},\n    ${aggs.map(([alias, expr]) => `${expr} AS ${alias}`).join(',\n    ')}\n  FROM base GROUP BY ${keys.join(', ')}\n)`);
  }
  if (spec.capped.length > 0) {
    for (const i of spec.capped) {
      ctes.push(`top_s${i} AS (SELECT s${i} FROM raw GROUP BY s${i} ORDER BY sum(n) DESC, s${i} LIMIT ${integer(spec.cap)})`);
    }
    const capKeys = keys.map((k) => {
      const i = segs.indexOf(k);
      return spec.capped.includes(i) ? `CASE WHEN s${i} IN (SELECT s${i} FROM top_s${i}) THEN s${i} ELSE ${literal(OTHER_LABEL)} END AS s${i}` : k;
    });
    ctes.push(`capped AS (\n  SELECT ${capKeys.join(', ')}, ${aggs.map(([a]) => a).join(', ')} FROM raw\n)`);
    const merged = aggs.map(([a, , how]) => `${how}(${a}) AS ${a}`);
    ctes.push(`merged AS (\n  SELECT ${keys.join(', ')}, ${merged.join(', ')} FROM capped GROUP BY ${keys.join(', ')}\n)`);
    // the distinct values a capped column had before capping, counted exactly from the uncapped cells
    const counts = spec.capped.map((i) => `(SELECT count(DISTINCT s${i}) FILTER (WHERE s${i} <> ${literal(NULL_LABEL)}) FROM raw)::DOUBLE AS d_s${i}`);
    return `WITH ${ctes.join(',\n')}\nSELECT *, ${counts.join(', ')} FROM merged\nORDER BY ${keys.join(', ')}`;
  }
  return `WITH ${ctes.join(',\n')}\nSELECT * FROM raw\nORDER BY ${keys.join(', ')}`;
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

export function parseCube(table: Table, segmentCount: number): CubeCell[] {
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
