/**
 * The row-group decoder: parquet-wasm 0.8.0 (arrow-rs's Parquet reader in WebAssembly), chosen over
 * hyparquet on speed and memory (bench/NOTES.md, "Parquet in DuckDB-Wasm"). It reads a Blob by range:
 * the footer, then only the byte ranges of the requested columns of one row group, and answers Arrow IPC.
 * INT96 timestamp columns are the exception, read by hyparquet (int96.ts). The module is passed in because
 * Node and the browser load it differently.
 */
import { Table, tableFromIPC, tableToIPC } from 'apache-arrow';
import type { Vector } from 'apache-arrow';
import type * as ParquetWasm from 'parquet-wasm';
import { readFooter } from './footer.ts';
import { readInt96Column } from './int96.ts';
import { topLevelColumns } from './schema.ts';

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
    const footer = await readFooter(blob, 'the file');
    const int96 = new Set(topLevelColumns(footer).filter((c) => c.element.type === 'INT96').map((c) => c.name));
    // One batch per row group: the reader's default of 1024 rows would make a hundred IPC messages.
    const decode = async (index: number, columns: readonly string[], rows: number) =>
      (await file.read({ rowGroups: [index], columns: [...columns], batchSize: Math.max(1, rows) })).intoIPCStream();
    return {
      async rowGroup(index, columns, rows) {
        const legacy = columns.filter((c) => int96.has(c));
        if (legacy.length === 0) return decode(index, columns, rows);
        const rest = columns.filter((c) => !int96.has(c));
        const decoded = rest.length ? tableFromIPC(await decode(index, rest, rows)) : null;
        const vectors: Record<string, Vector> = {};
        for (const c of columns) {
          vectors[c] = int96.has(c) ? await readInt96Column(blob, footer, index, c) : decoded?.getChild(c) as Vector;
        }
        return tableToIPC(new Table(vectors), 'stream');
      },
      close: () => file.free(),
    };
  };
}
