/**
 * DuckDB-Wasm in a Web Worker (AsyncDuckDB). A picked or dropped File is registered as a handle with
 * BROWSER_FILEREADER: the worker reads only the byte ranges DuckDB asks for (FileReaderSync on slices),
 * never the whole file. Results come back as Arrow IPC bytes through the same converter as wasm-node.
 */
import { AsyncDuckDB, DuckDBDataProtocol, VoidLogger } from '@duckdb/duckdb-wasm';
import type { Table } from '../core/table.ts';
import { tableFromIpcChunks } from './convert/arrow.ts';
import { toEngineError } from './errors.ts';
import { serialQueue } from './serial.ts';
import { buildScan, quoteIdentifier } from './sql-source.ts';
import { EngineError } from './types.ts';
import type { Engine, RegisteredSource, SourceSpec } from './types.ts';
import { createWasmCore } from './wasm-core.ts';
import type { WasmEngineOptions } from './wasm-core.ts';
import { describeBytes, withKind } from './file-signature.ts';
import { DEFAULT_BUDGET_BYTES, loadParquet } from './parquet/load.ts';
import { workerDecoder } from './parquet/worker-decoder.ts';

export interface WasmBrowserBundle {
  /** URL of duckdb-eh.wasm. */
  mainModule: string;
  /** URL of duckdb-browser-eh.worker.js. */
  mainWorker: string;
}

export interface WasmBrowserEngineOptions extends WasmEngineOptions {
  /** Where the Wasm build lives; the Vite-served copy from node_modules when absent. */
  bundles?: WasmBrowserBundle;
  /** Memory the loaded columns of a Parquet log may take, in bytes (app/engine/parquet/load.ts). */
  parquetBudgetBytes?: number;
}

/**
 * Tables loaded from Arrow IPC (the cube) and SQL over them, on a connection of their own so that loading
 * or querying them never disturbs a scan running on the engine's connection; not counted as scans.
 */
export interface WasmArrowTables {
  /** Replaces table `name` with the rows of an Arrow IPC stream. */
  load(name: string, ipc: Uint8Array): Promise<void>;
  query(sql: string): Promise<Table>;
}

export type WasmBrowserEngine = Engine & { readonly kind: 'wasm-browser'; readonly tables: WasmArrowTables };

export async function createWasmBrowserEngine(options: WasmBrowserEngineOptions = {}): Promise<WasmBrowserEngine> {
  const bundle = options.bundles ?? (await import('./wasm-browser-bundles.ts')).defaultBundle;
  const worker = new Worker(bundle.mainWorker);
  const db = new AsyncDuckDB(new VoidLogger(), worker);
  let id: number;
  try {
    await db.instantiate(bundle.mainModule);
    await db.open({ query: { castBigIntToDouble: false, castDecimalToDouble: false, castTimestampToDate: false, castDurationToTime64: false } });
    id = await db.connectInternal();
  } catch (error) {
    worker.terminate();
    throw toEngineError(error);
  }

  const core = createWasmCore({
    kind: 'wasm-browser',
    api: {
      start: (sql) => db.startPendingQuery(id, sql, false),
      poll: () => db.pollPendingQuery(id),
      fetch: () => db.fetchQueryResults(id),
      cancel: async () => { await db.cancelPendingQuery(id); },
    },
    yieldTurn: () => new Promise((resolve) => setTimeout(resolve, 0)),
    close: async () => {
      await db.disconnect(id).catch(() => undefined);
      await db.terminate();
    },
  });
  await core.run('SET autoload_known_extensions = false');
  await core.run('SET autoinstall_known_extensions = false');

  let fileSequence = 0;

  async function register(source: SourceSpec): Promise<RegisteredSource> {
    core.ensureOpen();
    if (source.kind !== 'file') throw new EngineError('unsupported-format', 'The in-browser engine reads picked or dropped files; a path cannot be opened here.');
    // Registered names keep the original name last so the format is still read from the extension.
    const names = source.files.map((file) => `cw${++fileSequence}_${file.name.replace(/[^A-Za-z0-9._-]/g, '_')}`);
    const scan = buildScan({ paths: names, format: source.format, csv: source.csv });
    await core.ensureFormat(scan.format, options);
    if (scan.format === 'parquet') return registerParquet(source.files, names, scan.sql);
    for (const [k, file] of source.files.entries()) {
      await db.registerFileHandle(names[k] as string, file, DuckDBDataProtocol.BROWSER_FILEREADER, true);
    }
    return core.createView(scan, names, names);
  }

  /**
   * Parquet: the File is read by range (its footer here, then one row group's columns at a time in the
   * decode worker), decoded to Arrow by parquet-wasm in that worker, and the bytes pass through this thread
   * to the DuckDB worker, each buffer transferred, never copied. Messages name the file as the user picked it.
   */
  async function registerParquet(files: readonly File[], names: readonly string[], scanSql: string): Promise<RegisteredSource> {
    const decoder = workerDecoder(() => new Worker(new URL('./parquet/decode.worker.ts', import.meta.url), { type: 'module', name: 'parquet decode worker' }));
    const parts = files.map((file) => ({ name: file.name, blob: file }));
    try {
      return await core.createLoadedView((tablePrefix) => loadParquet(parts, decoder, {
        append: (table, ipc, create) => core.exclusive(() => db.insertArrowFromIPCStream(id, ipc, { name: table, create })),
        run: (sql) => core.exclusive(async () => { await db.runQuery(id, sql); }),
      }, { tablePrefix, budgetBytes: options.parquetBudgetBytes ?? DEFAULT_BUDGET_BYTES, hivePartitioning: false }).then((l) => { options.onParquetLoad?.(l.timings); return l.selectSql; }), 'parquet', scanSql, names);
    } catch (error) {
      const e = error instanceof EngineError ? error : toEngineError(error);
      if (files.length !== 1) throw e;
      const file = files[0] as File;
      return Promise.reject(withKind(e, file.name, describeBytes(new Uint8Array(await file.slice(0, 512).arrayBuffer())), 'parquet'));
    }
  }

  const tablesQueue = serialQueue();
  let tablesConnection: Promise<number> | null = null;
  const onTables = <T>(work: (connection: number) => Promise<T>): Promise<T> => tablesQueue(async () => {
    core.ensureOpen();
    tablesConnection ??= db.connectInternal();
    try {
      return await work(await tablesConnection);
    } catch (error) {
      throw toEngineError(error);
    }
  });
  const tables: WasmArrowTables = {
    load: (name, ipc) => onTables(async (connection) => {
      await db.runQuery(connection, `DROP TABLE IF EXISTS ${quoteIdentifier(name)}`);
      // The worker takes ownership of the buffer it is handed; the caller keeps its own bytes.
      await db.insertArrowFromIPCStream(connection, ipc.slice(), { name, create: true });
    }),
    query: (sql) => onTables(async (connection) => tableFromIpcChunks([await db.runQuery(connection, sql)])),
  };

  return { ...core.engine, kind: 'wasm-browser', register, tables, get sourceScans() { return core.engine.sourceScans; } };
}
