/**
 * The segment map's regroup as SQL over the cube table (app/engine/cube-arrow.ts lays it out: one row per
 * cube cell, `segment` a list in segment-column order, every sum a DOUBLE). Summing cells is exact for
 * counts, minima and maxima; the DOUBLE sums agree with the page's own summation up to the order of addition.
 */
import type { GroupActionTotals } from '../segment-map.ts';
import { groupLabel } from '../segment-map.ts';
import { ident, integer, literal } from '../sql/quote.ts';
import type { Cell, Table } from '../table.ts';
import type { CubeFilter } from './filter.ts';

export interface RegroupSpec {
  /** Name of the cube table (unquoted). */
  readonly table: string;
  readonly segmentColumns: readonly string[];
  readonly groupBy: readonly string[];
  readonly filter?: CubeFilter;
}

function groupIndexes(segmentColumns: readonly string[], groupBy: readonly string[]): number[] {
  const idx = groupBy.map((c) => segmentColumns.indexOf(c));
  const unknown = groupBy.filter((_, k) => (idx[k] as number) < 0);
  if (unknown.length) throw new Error(`cannot group by ${unknown.join(', ')}: not a segment column of this audit`);
  return idx;
}

function inList(column: string, values: readonly string[]): string {
  return values.length === 0 ? 'false' : `${ident(column)} IN (${values.map(literal).join(', ')})`;
}

export function regroupSql(spec: RegroupSpec): string {
  const idx = groupIndexes(spec.segmentColumns, spec.groupBy);
  const groups = idx.map((i, k) => `${ident('segment')}[${integer(i + 1)}] AS ${ident(`g${k}`)}`);
  const where: string[] = [];
  if (spec.filter?.versions) where.push(inList('version', spec.filter.versions));
  if (spec.filter?.actions) where.push(inList('action', spec.filter.actions));
  const sums = ['n', 'nP', 'sumInvP', 'sumInvP2'].map((f) => `sum(${ident(f)}) AS ${ident(f)}`);
  return [
    `SELECT ${[...groups, ident('action'), ...sums, `min(${ident('minP')}) AS ${ident('minP')}`].join(', ')}`,
    `FROM ${ident(spec.table)}`,
    ...(where.length ? [`WHERE ${where.join(' AND ')}`] : []),
    `GROUP BY ${[...idx.map((_, k) => ident(`g${k}`)), ident('action')].join(', ')}`,
  ].join('\n');
}

function numberAt(table: Table, name: string, i: number): number | null {
  const k = table.names.indexOf(name);
  if (k < 0) throw new Error(`regroup result has no column "${name}"`);
  const v: Cell = table.columns[k]?.[i] ?? null;
  if (v === null) return null;
  if (typeof v === 'number') return v;
  if (typeof v === 'bigint') return Number(v);
  throw new Error(`regroup result column "${name}" holds ${typeof v}, not a number`);
}

/** Rows of regroupSql's result as (group, action) totals for segmentMapSeries. */
export function parseRegroup(table: Table, groupBy: readonly string[]): GroupActionTotals[] {
  const out: GroupActionTotals[] = [];
  const action = table.columns[table.names.indexOf('action')];
  if (!action) throw new Error('regroup result has no column "action"');
  const groupColumns = groupBy.map((_, k) => {
    const col = table.columns[table.names.indexOf(`g${k}`)];
    if (!col) throw new Error(`regroup result has no column "g${k}"`);
    return col;
  });
  for (let i = 0; i < table.rowCount; i++) {
    const values = groupColumns.map((c) => String(c[i]));
    out.push({
      group: groupLabel(values),
      values,
      action: String(action[i]),
      n: numberAt(table, 'n', i) ?? 0,
      nP: numberAt(table, 'nP', i) ?? 0,
      sumInvP: numberAt(table, 'sumInvP', i) ?? 0,
      sumInvP2: numberAt(table, 'sumInvP2', i) ?? 0,
      minP: numberAt(table, 'minP', i),
    });
  }
  return out;
}
