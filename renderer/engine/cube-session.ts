import type { CubeFilter } from '../../app/core/cube/filter.ts';
import { parseRegroup, regroupSql } from '../../app/core/cube/regroup-sql.ts';
import type { CubeCell } from '../../app/core/cube/types.ts';
import type { Series } from '../../app/core/model/report.ts';
import { segmentMapSeries } from '../../app/core/segment-map.ts';
import type { WasmArrowTables } from '../../app/engine/wasm-browser.ts';

/** The table the audit's cube is loaded as in the page's DuckDB-Wasm worker. */
const CUBE_TABLE = 'cube';

/**
 * The audit's cube in the page's own DuckDB-Wasm worker (DEVELOPERS.md, "The desktop data path"): the segment map's regroups and
 * filters are SQL over it there, with no rescan and no request to the engine that scanned the log.
 */
export interface CubeSession {
  readonly segmentColumns: readonly string[];
  /** Logged policy versions in the cube, sorted ("" alone when no policy_version column was mapped). */
  readonly versions: readonly string[];
  segmentMap(groupBy: readonly string[], filter?: CubeFilter): Promise<Series[]>;
  /** SQL statements run over the cube table so far. */
  readonly queriesRun: number;
}

export async function loadCubeSession(tables: WasmArrowTables, ipc: Uint8Array, cells: readonly CubeCell[], segmentColumns: readonly string[]): Promise<CubeSession> {
  await tables.load(CUBE_TABLE, ipc);
  let queriesRun = 0;
  return {
    segmentColumns,
    versions: [...new Set(cells.map((c) => c.version))].sort(),
    async segmentMap(groupBy, filter) {
      const sql = regroupSql({ table: CUBE_TABLE, segmentColumns, groupBy, ...(filter ? { filter } : {}) });
      queriesRun++;
      return segmentMapSeries(parseRegroup(await tables.query(sql), groupBy), groupBy);
    },
    get queriesRun() { return queriesRun; },
  };
}
