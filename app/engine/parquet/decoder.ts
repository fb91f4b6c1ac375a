/**
 * The row-group decoder: parquet-wasm 0.8.0 (arrow-rs's Parquet reader in WebAssembly), chosen over
 * hyparquet on speed and memory (bench/NOTES.md, "Parquet in DuckDB-Wasm"). It reads a Blob by range:
 * the footer, then only the byte ranges of the requested columns of one row group, and answers Arrow IPC.
 * The module is passed in because Node and the browser load it differently.
 */
import type * as ParquetWasm from 'parquet-wasm';

export type ParquetWasmModule = Pick<typeof ParquetWasm, 'ParquetFile'>;

export interface RowGroupReader {
  /** One row group's columns as an Arrow IPC stream. */
  rowGroup(index: number, columns: readonly string[], rows: number): Promise<Uint8Array>;
  close(): void;
}

export type RowGroupDecoder = (blob: Blob) => Promise<RowGroupReader>;

export function parquetWasmDecoder(module: ParquetWasmModule): RowGroupDecoder {
  return async (blob) => {
    const file = await module.ParquetFile.fromFile(blob);
    return {
      async rowGroup(index, columns, rows) {
        // One batch per row group: the reader's default of 1024 rows would make a hundred IPC messages.
        const table = await file.read({ rowGroups: [index], columns: [...columns], batchSize: Math.max(1, rows) });
        return table.intoIPCStream();
      },
      close: () => file.free(),
    };
  };
}
