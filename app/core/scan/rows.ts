/**
 * The row-level queries (DESIGN.md §4): duplicated decision ids, the largest weights of each target
 * (enough for the PSIS tail and the top-1% weight share), and a bounded number of example rows per
 * finding. Everything else comes from the cube.
 */
import { SEP } from '../cube/rollup.ts';
import { double, ident, integer, literal } from '../sql/quote.ts';
import type { Table } from '../table.ts';
import type { TargetPolicy } from '../targets/targets.ts';
import { VALID_P, type RowExpressions } from './expressions.ts';

export function duplicatesSql(relation: string, idColumn: string, examples: number): string {
  const id = ident(idColumn);
  return [
    'WITH counts AS (',
    `  SELECT CAST(${id} AS VARCHAR) AS id, count(*) AS c FROM ${relation} WHERE ${id} IS NOT NULL GROUP BY 1 HAVING count(*) > 1`,
    ')',
    `SELECT count(*)::DOUBLE AS ids, coalesce(sum(c), 0)::DOUBLE AS rows_in_duplicates, coalesce(max(c), 0)::DOUBLE AS max_copies, min(id, ${integer(Math.max(1, examples))}) AS example_ids FROM counts`,
  ].join('\n');
}

export interface Duplicates {
  readonly ids: number;
  readonly rowsInDuplicates: number;
  /** rows beyond the first of each id: what removing duplicates would drop */
  readonly extraRows: number;
  readonly maxCopies: number;
  readonly exampleIds: readonly string[];
}

export function parseDuplicates(t: Table): Duplicates {
  const get = (n: string) => (t.columns[t.names.indexOf(n)] as readonly unknown[])[0];
  const ids = Number(get('ids') ?? 0);
  const rows = Number(get('rows_in_duplicates') ?? 0);
  const ex = get('example_ids');
  return { ids, rowsInDuplicates: rows, extraRows: rows - ids, maxCopies: Number(get('max_copies') ?? 0), exampleIds: Array.isArray(ex) ? ex.map(String) : [] };
}

/** SQL expression of q for a row, or null for a target column (which the row carries). */
function qExpression(target: TargetPolicy, rows: RowExpressions, segmentColumns: readonly string[], actions: readonly string[]): { expr: string; join: string } {
  switch (target.kind) {
    case 'uniform':
      return { expr: actions.length ? `CASE WHEN ${rows.action} IN (${actions.map(literal).join(', ')}) THEN ${double(1 / actions.length)} ELSE 0 END` : '0', join: '' };
    case 'always':
      return { expr: `CASE WHEN ${rows.action} = ${literal(target.action)} THEN CAST(1 AS DOUBLE) ELSE 0 END`, join: '' };
    case 'column':
      return { expr: rows.targetPropensity ?? `TRY_CAST(${ident(target.column)} AS DOUBLE)`, join: '' };
    case 'table': {
      const values: string[] = [];
      for (const [key, m] of target.probabilities) {
        const parts = target.keyColumns.length ? key.split(SEP) : [];
        for (const [a, q] of m) if (q > 0) values.push(`(${[...parts.map(literal), literal(a), double(q)].join(', ')})`);
      }
      const keyNames = target.keyColumns.map((_, i) => `k${i}`);
      const on = target.keyColumns.map((c, i) => `${rows.segments[segmentColumns.indexOf(c)]} = t.k${i}`);
      if (values.length === 0) return { expr: '0', join: '' };
      return {
        expr: 'coalesce(t.q, 0)',
        join: `LEFT JOIN (VALUES ${values.join(', ')}) AS t(${[...keyNames, 'a', 'q'].join(', ')}) ON ${[...on, `${rows.action} = t.a`].join(' AND ')}`,
      };
    }
  }
}

export function tailSql(relation: string, rows: RowExpressions, target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], limit: number): string {
  const { expr, join } = qExpression(target, rows, segmentColumns, actions);
  return [
    `SELECT w FROM (`,
    `  SELECT (${expr}) / p AS w FROM (SELECT *, ${rows.propensity} AS p FROM ${relation}) AS src ${join}`,
    `  WHERE ${VALID_P}`,
    `) WHERE w > 0 AND isfinite(w) ORDER BY w DESC LIMIT ${integer(limit)}`,
  ].join('\n');
}

export function parseTail(t: Table): number[] {
  return (t.columns[0] as readonly unknown[]).map((v) => Number(v));
}

export interface ExampleRequest {
  /** SQL predicate over the source's own columns (built from role expressions). */
  readonly where: string;
}

/** One scan: rows matching any finding, then at most `perFinding` per finding in a stable order. */
export function examplesSql(relation: string, requests: readonly ExampleRequest[], perFinding: number, orderBy: readonly string[]): string {
  const any = requests.map((r) => `(${r.where})`).join(' OR ');
  const cases = requests.map((r, i) => `WHEN ${i} THEN (${r.where})`).join(' ');
  const ids = requests.map((_, i) => `(${i})`).join(', ');
  const order = orderBy.length ? orderBy.join(', ') : '1';
  return [
    `WITH m AS MATERIALIZED (SELECT * FROM ${relation} WHERE ${any})`,
    `SELECT f.__finding, m.* FROM m, (VALUES ${ids}) AS f(__finding)`,
    `WHERE CASE f.__finding ${cases} END`,
    `QUALIFY row_number() OVER (PARTITION BY f.__finding ORDER BY ${order}) <= ${integer(perFinding)}`,
    `ORDER BY f.__finding, ${order}`,
  ].join('\n');
}
