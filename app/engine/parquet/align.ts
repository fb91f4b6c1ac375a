/**
 * Re-cuts a part's decoded row groups into pieces of exactly DuckDB's row-group size before they are
 * appended. DuckDB keeps a table in row groups of 122,880 rows (DuckDB documentation, "Storage": row
 * groups; `DEFAULT_ROW_GROUP_SIZE` in its source), and DuckDB-Wasm 1.32's Arrow append into a table that
 * ends in a partly filled row group costs about four times one that starts on a boundary (bench/NOTES.md,
 * "Aligned appends"). A Parquet writer's row groups rarely hold a multiple of that (DuckDB's own writer
 * overshoots it by a few hundred rows), so the rows past the last whole piece wait for the next row group.
 * Pieces are Arrow IPC streams; slices of the decoded tables are re-encoded, an untouched table is passed on
 * as it came.
 */
import { tableFromIPC, tableToIPC } from 'apache-arrow';
import type { Table } from 'apache-arrow';

export const DUCKDB_ROW_GROUP_ROWS = 122_880;

export interface RowGroupAligner {
  /** The whole pieces that this row group's rows complete (none while fewer than a piece wait). */
  push(ipc: Uint8Array): Uint8Array[];
  /** The rows still waiting, as the last piece, or null when none wait. */
  rest(): Uint8Array | null;
}

export function rowGroupAligner(pieceRows: number = DUCKDB_ROW_GROUP_ROWS): RowGroupAligner {
  // The rows waiting, and their IPC bytes while they are exactly one decoded row group (nothing re-encoded).
  let waiting: Table | null = null;
  let waitingIpc: Uint8Array | null = null;
  return {
    push(ipc) {
      const table = tableFromIPC(ipc);
      if (!waiting) {
        waiting = table;
        waitingIpc = ipc;
      } else {
        waiting = waiting.concat(table);
        waitingIpc = null;
      }
      const pieces: Uint8Array[] = [];
      if (waiting.numRows === pieceRows && waitingIpc) {
        pieces.push(waitingIpc);
        waiting = null;
        waitingIpc = null;
        return pieces;
      }
      while (waiting.numRows >= pieceRows) {
        pieces.push(tableToIPC(waiting.slice(0, pieceRows), 'stream'));
        waiting = waiting.slice(pieceRows);
        waitingIpc = null;
      }
      return pieces;
    },
    rest() {
      const last = waiting && waiting.numRows > 0 ? waitingIpc ?? tableToIPC(waiting, 'stream') : null;
      waiting = null;
      waitingIpc = null;
      return last;
    },
  };
}
