/** Which cube cells a segment map is drawn from, and that choice applied to cells in memory. */
import type { CubeCell } from './types.ts';

/** Which cube cells the map is drawn from; an absent list keeps every value. */
export interface CubeFilter {
  /** Logged policy versions ("" is the version of every cell when no policy_version column was mapped). */
  readonly versions?: readonly string[];
  readonly actions?: readonly string[];
}

/** The filter over cells in memory: what regroupSql's WHERE keeps (app/core/cube/regroup-sql.ts). */
export function filterCells(cells: readonly CubeCell[], filter: CubeFilter = {}): CubeCell[] {
  return cells.filter((c) => (!filter.versions || filter.versions.includes(c.version)) && (!filter.actions || filter.actions.includes(c.action)));
}
