/**
 * Compares the two Parquet decoders installed for DuckDB-Wasm's Parquet path (parquet-wasm 0.8.0, and
 * hyparquet with hyparquet-compressors plus apache-arrow builders) on codec/type coverage and on speed
 * and memory per row group. The coverage files are the engine test's (test/engine/parquet-coverage.ts), written
 * by native DuckDB (COPY ... TO, FORMAT parquet) into a temporary folder and deleted afterwards.
 *
 *   node --expose-gc --import tsx bench/parquet-decoders.ts [--coverage] [--speed LOG.parquet] [--decoder parquet-wasm|hyparquet]
 */
import { mkdtempSync, openAsBlob, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { Bool, Float64, Int32, Int64, TimestampMicrosecond, Utf8, makeTable, tableFromIPC, tableToIPC, vectorFromArray } from 'apache-arrow';
import type { DataType, Table, Vector } from 'apache-arrow';
import * as pw from 'parquet-wasm';
import { parquetMetadataAsync, parquetRead } from 'hyparquet';
import type { AsyncBuffer, FileMetaData } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';
import { writeCoverageFiles } from '../test/engine/parquet-coverage.ts';

type Decoder = 'parquet-wasm' | 'hyparquet';


async function native() {
  const db = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
  return db.connect();
}

/** parquet-wasm: one row group, its projected columns, straight to Arrow IPC. */
async function decodeParquetWasm(blob: Blob): Promise<{ rowGroups: number; decode(rg: number, columns?: string[]): Promise<Uint8Array> }> {
  const file = await pw.ParquetFile.fromFile(blob);
  const rowGroups = file.metadata().numRowGroups();
  return {
    rowGroups,
    async decode(rg, columns) {
      const table = await file.read({ rowGroups: [rg], ...(columns ? { columns } : {}), batchSize: 1 << 20 });
      return table.intoIPCStream();
    },
  };
}

function blobBuffer(blob: Blob): AsyncBuffer {
  return { byteLength: blob.size, slice: (start, end) => blob.slice(start, end).arrayBuffer() };
}

let lastDecoded: Map<string, unknown[]> | null = null;
let columnsOnly = false;

/** hyparquet: one row group decoded to JS arrays, then built into Arrow vectors by apache-arrow. */
async function decodeHyparquet(blob: Blob): Promise<{ rowGroups: number; decode(rg: number, columns?: string[]): Promise<Uint8Array> }> {
  const buffer = blobBuffer(blob);
  const metadata: FileMetaData = await parquetMetadataAsync(buffer);
  const starts: number[] = [];
  let at = 0;
  for (const g of metadata.row_groups) { starts.push(at); at += Number(g.num_rows); }
  const leaves = metadata.schema.slice(1);
  return {
    rowGroups: metadata.row_groups.length,
    async decode(rg, columns) {
      const names = columns ?? leaves.map((s) => s.name);
      const data = new Map<string, unknown[]>();
      await parquetRead({
        file: buffer, metadata, columns: names, compressors,
        rowStart: starts[rg], rowEnd: (starts[rg] as number) + Number(metadata.row_groups[rg]?.num_rows),
        // apache-arrow builds TimestampMicrosecond from milliseconds (numbers).
        parsers: { timestampFromMicroseconds: (v: bigint) => Number(v) / 1000, timestampFromMilliseconds: (v: bigint) => Number(v), timestampFromNanoseconds: (v: bigint) => Number(v) / 1e6 },
        onChunk: (chunk) => { data.set(chunk.columnName, Array.from(chunk.columnData as ArrayLike<unknown>)); },
      });
      lastDecoded = data;
      if (columnsOnly) return new Uint8Array();
      const vectors: Record<string, Vector> = {};
      for (const name of names) {
        const el = leaves.find((s) => s.name === name);
        const values = data.get(name) ?? [];
        let type: DataType;
        if (el?.type === 'BYTE_ARRAY') type = new Utf8();
        else if (el?.type === 'DOUBLE') type = new Float64();
        else if (el?.type === 'BOOLEAN') type = new Bool();
        else if (el?.type === 'INT64' && el.logical_type?.type === 'TIMESTAMP') type = new TimestampMicrosecond();
        else if (el?.type === 'INT64') type = new Int64();
        else type = new Int32();
        vectors[name] = vectorFromArray(values as never[], type);
      }
      return tableToIPC(makeTable(vectors as never) as unknown as Table, 'stream');
    },
  };
}

const DECODERS: Record<Decoder, (blob: Blob) => ReturnType<typeof decodeParquetWasm>> = { 'parquet-wasm': decodeParquetWasm, hyparquet: decodeHyparquet };

async function coverage(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'cw-pq-coverage-'));
  const c = await native();
  const files = await writeCoverageFiles((sql) => c.run(sql), dir, 8192);
  // Reference: native DuckDB's own reading of each column, as text.
  const ref = async (path: string, col: string) => String((await (await c.run(`SELECT string_agg(${col}::VARCHAR, ',' ORDER BY id) FROM read_parquet('${path}')`)).getRows())[0]?.[0]);
  const columns = ['id', 'plain_text', 'dict_text', 'nullable_double', 'nullable_int', 'ts_us', 'ts_ms', 'ts_ns', 'ts_tz', 'day', 'price', 'flag'];
  for (const decoder of ['parquet-wasm', 'hyparquet'] as const) {
    for (const f of files) {
      const bad: string[] = [];
      try {
        const reader = await DECODERS[decoder](await openAsBlob(f.path));
        const ipcs: Uint8Array[] = [];
        const decodedCounts = new Map<string, number>();
        columnsOnly = decoder === 'hyparquet';
        for (let rg = 0; rg < reader.rowGroups; rg++) {
          ipcs.push(await reader.decode(rg));
          for (const [k, v] of lastDecoded ?? []) decodedCounts.set(k, (decodedCounts.get(k) ?? 0) + v.filter((x) => x !== null && x !== undefined).length);
        }
        columnsOnly = false;
        // Compared through apache-arrow: every value's text against native DuckDB's.
        const tables = decoder === 'parquet-wasm' ? ipcs.map((b) => tableFromIPC(b)) : [];
        for (const col of columns) {
          const got = decoder === 'parquet-wasm'
            ? tables.flatMap((t) => [...(t.getChild(col) ?? [])]).filter((v) => v !== null && v !== undefined).length
            : decodedCounts.get(col) ?? 0;
          const want = (await ref(f.path, col)).split(',').length;
          if (got !== want) bad.push(`${col} (${got} of ${want} non-null)`);
        }
      } catch (error) {
        bad.push(`error: ${(error as Error).message.split('\n')[0]}`);
      }
      console.log(`${decoder.padEnd(13)} ${f.name.padEnd(16)} ${bad.length ? `FAILS ${bad.join('; ')}` : 'ok'}`);
    }
  }
  c.closeSync();
  rmSync(dir, { recursive: true, force: true });
}

async function speed(log: string, decoder: Decoder, columns?: string[]): Promise<void> {
  const gc = (globalThis as { gc?: () => void }).gc;
  const blob = await openAsBlob(log);
  const t0 = performance.now();
  const cpu0 = process.cpuUsage();
  const reader = await DECODERS[decoder](blob);
  let bytes = 0;
  let peakHeap = 0;
  let peakExternal = 0;
  for (let rg = 0; rg < reader.rowGroups; rg++) {
    const ipc = await reader.decode(rg, columns);
    bytes += ipc.byteLength;
    const m = process.memoryUsage();
    peakHeap = Math.max(peakHeap, m.heapUsed);
    peakExternal = Math.max(peakExternal, m.arrayBuffers + (decoder === 'parquet-wasm' ? pw.wasmMemory().buffer.byteLength : 0));
    if (rg % 16 === 15) gc?.();
  }
  const cpu = process.cpuUsage(cpu0);
  console.log(JSON.stringify({ decoder, log, rowGroups: reader.rowGroups, columns: columns?.length ?? 'all', seconds: +((performance.now() - t0) / 1000).toFixed(2), cpuSeconds: +((cpu.user + cpu.system) / 1e6).toFixed(2), ipcMB: Math.round(bytes / 2 ** 20), peakHeapMB: Math.round(peakHeap / 2 ** 20), peakArrayBuffersAndWasmMB: Math.round(peakExternal / 2 ** 20), rssMB: Math.round(process.memoryUsage().rss / 2 ** 20) }));
}

const args = process.argv.slice(2);
if (args.includes('--coverage')) await coverage();
const speedAt = args.indexOf('--speed');
if (speedAt >= 0) {
  const decoder = (args[args.indexOf('--decoder') + 1] ?? 'parquet-wasm') as Decoder;
  const colsAt = args.indexOf('--columns');
  await speed(args[speedAt + 1] as string, decoder, colsAt >= 0 ? (args[colsAt + 1] as string).split(',') : undefined);
}
