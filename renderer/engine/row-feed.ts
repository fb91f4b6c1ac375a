/**
 * What the segment map needs to list the rows behind a cell or a finding: the drill-down selection, the
 * pager's feed and the SQL shown to the reader. Built here, in the page's engine layer, from
 * app/core/scan/drill.ts; the views only render them (DEVELOPERS.md, "Layer rules").
 */
import type { CubeCell } from '../../app/core/cube/types.ts';
import type { Finding, Report } from '../../app/core/model/report.ts';
import { cellReaderSql, cursorAfter, DRILL_PAGE_ROWS, drillOrderColumns, findingWhere, type DrillCursor, type DrillSelection, type PageRequest } from '../../app/core/scan/drill.ts';
import { OTHER_LABEL } from '../../app/core/scan/expressions.ts';
import type { Table } from '../../app/core/table.ts';
import type { RowSelection, RowsRequest } from './backend.ts';
import { drillSpecOf } from './engine-backend.ts';
import type { OpenedSource } from './status.ts';

/** Where a pager's rows come from; a new `key` means another selection, and the pager starts over. */
export interface RowFeed {
  readonly key: string;
  /** Rows per page read from the engine. */
  readonly pageRows: number;
  count(): Promise<number>;
  page(request: PageRequest): Promise<Table>;
  /** The cursor after a fetched page (cursorAfter in app/core/scan/drill.ts). */
  next(page: Table, before: DrillCursor | null, offset: number): DrillCursor | null;
}

export interface RowReader {
  rows(source: OpenedSource, request: RowsRequest): Promise<Table>;
  rowCount(source: OpenedSource, selection: RowSelection): Promise<number>;
}

/** The pages of a selection's rows, in drill order, read from the engine on demand. */
export function rowFeed(engine: RowReader, source: OpenedSource, request: RowSelection): RowFeed {
  const orderColumns = drillOrderColumns(drillSpecOf(source, request));
  return {
    key: JSON.stringify([source.relation, request.selection]),
    pageRows: DRILL_PAGE_ROWS,
    count: () => engine.rowCount(source, request),
    page: (page) => engine.rows(source, { ...request, page }),
    next: (t, before, offset) => cursorAfter(orderColumns, t, before, offset),
  };
}

/** A finding's rows in the open log: its predicate, when its SQL selects from this log's relation. */
export function findingSelection(finding: Finding, source: OpenedSource): DrillSelection | null {
  const where = findingWhere(finding.sql, source.relation);
  return where ? { segment: {}, where } : null;
}

/** For a capped segment column shown as "(other)", the values the cube kept; null when they are not known. */
function keptValues(report: Report, cells: readonly CubeCell[] | undefined, segment: Readonly<Record<string, string>>): Record<string, string[]> | null {
  const kept: Record<string, string[]> = {};
  for (const [column, value] of Object.entries(segment)) {
    if (value !== OTHER_LABEL || !report.roles.caps[column]) continue;
    const i = report.roles.segments.indexOf(column);
    if (!cells || i < 0) return null;
    kept[column] = [...new Set(cells.map((c) => c.segment[i] as string))].filter((v) => v !== OTHER_LABEL);
  }
  return kept;
}

/** A segment-map cell's rows: its segment (as the cube labels it) and action; null when they cannot be selected. */
export function cellSelection(report: Report, cells: readonly CubeCell[] | undefined, segment: Readonly<Record<string, string>> | null, action: string): DrillSelection | null {
  const kept = segment ? keptValues(report, cells, segment) : null;
  return segment && kept && report.roles.action ? { segment, action, kept } : null;
}

/** SQL selecting a cell's rows, for a reader to re-run against the log (called `log` there). */
export function cellSql(report: Report, segment: Readonly<Record<string, string>> | null, action: string): string | null {
  return report.roles.action && segment ? cellReaderSql(report.roles.action, segment, action) : null;
}
