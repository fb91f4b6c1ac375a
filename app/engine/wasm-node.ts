/**
 * DuckDB-Wasm's Node blocking build, for tests and for checking that the Wasm path answers like native.
 * Files are read in place: each is registered with registerFileURL(path, path, NODE_FS), and the Node
 * runtime then opens it with fs.openSync and serves DuckDB's reads with fs.readSync into Wasm memory,
 * range by range; nothing is copied whole into JS memory.
 */
import { openAsBlob } from 'node:fs';
import { createRequire } from 'node:module';
import type * as DuckDBBlocking from '@duckdb/duckdb-wasm/blocking';
import { toEngineError } from './errors.ts';
import { withFileKind } from './file-kind.ts';
import { foldersAmong } from './node-paths.ts';
import { buildScan, globSql } from './sql-source.ts';
import { EngineError } from './types.ts';
import type { Engine, RegisteredSource, SourceSpec } from './types.ts';
import { createWasmCore } from './wasm-core.ts';
import type { WasmEngineOptions } from './wasm-core.ts';
import { parquetWasmDecoder } from './parquet/decoder.ts';
import type { ParquetWasmModule } from './parquet/decoder.ts';
import { DEFAULT_BUDGET_BYTES, loadParquet } from './parquet/load.ts';
import type { ParquetPart } from './parquet/load.ts';

const require = createRequire(import.meta.url);

export interface WasmNodeEngineOptions extends WasmEngineOptions {
  /** Memory the loaded columns of a Parquet log may take, in bytes (app/engine/parquet/load.ts). */
  parquetBudgetBytes?: number;
  /** Rows per Arrow append of a Parquet load (app/engine/parquet/load.ts). */
  parquetPieceRows?: number;
}

export async function createWasmNodeEngine(options: WasmNodeEngineOptions = {}): Promise<Engine & { readonly kind: 'wasm-node' }> {
  const duckdb = require('@duckdb/duckdb-wasm/dist/duckdb-node-blocking.cjs') as typeof DuckDBBlocking;
  const bundles = {
    mvp: { mainModule: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-mvp.wasm'), mainWorker: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-node-mvp.worker.cjs') },
    eh: { mainModule: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-eh.wasm'), mainWorker: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-node-eh.worker.cjs') },
  };
  let db: DuckDBBlocking.DuckDBBindings;
  let conn: DuckDBBlocking.DuckDBConnection;
  try {
    db = await duckdb.createDuckDB(bundles, new duckdb.VoidLogger(), duckdb.NODE_RUNTIME);
    await db.instantiate(() => undefined);
    db.open({ query: { castBigIntToDouble: false, castDecimalToDouble: false, castTimestampToDate: false, castDurationToTime64: false } });
    conn = db.connect();
  } catch (error) {
    throw toEngineError(error);
  }
  const id = conn.useUnsafe((_bindings, connectionId) => connectionId);

  const core = createWasmCore({
    kind: 'wasm-node',
    api: {
      start: async (sql) => db.startPendingQuery(id, sql, false),
      poll: async () => db.pollPendingQuery(id),
      fetch: async () => db.fetchQueryResults(id),
      cancel: async () => { db.cancelPendingQuery(id); },
    },
    yieldTurn: () => new Promise((resolve) => setImmediate(resolve)),
    close: async () => {
      conn.close();
      db.reset();
    },
  });
  await core.run('SET autoload_known_extensions = false');
  await core.run('SET autoinstall_known_extensions = false');

  const registeredFiles = new Set<string>();

  async function register(source: SourceSpec): Promise<RegisteredSource> {
    core.ensureOpen();
    if (source.kind !== 'path') throw new EngineError('unsupported-format', 'This engine reads files by path; use the browser engine for a picked or dropped file.');
    const folders = foldersAmong(source.paths);
    const scan = buildScan({ paths: source.paths, folders, format: source.format, csv: source.csv, hivePartitioning: source.hivePartitioning });
    await core.ensureFormat(scan.format, options);
    if (scan.format === 'parquet') {
      const hive = source.hivePartitioning ?? folders.length > 0;
      return registerParquet(source.paths, scan, hive).catch((error: unknown) => {
        throw error instanceof EngineError ? withFileKind(error, source.paths, scan.format) : error;
      });
    }
    const listed = await core.run(globSql(scan.patterns));
    const files = (listed.columns[0] ?? []).map(String);
    for (const file of files) {
      if (registeredFiles.has(file)) continue;
      db.registerFileURL(file, file, duckdb.DuckDBDataProtocol.NODE_FS, false);
      registeredFiles.add(file);
    }
    try {
      return await core.createView(scan, files, source.paths);
    } catch (error) {
      throw error instanceof EngineError ? withFileKind(error, source.paths, scan.format) : error;
    }
  }

  /**
   * Parquet: the files behind the scan are listed as DuckDB would (its glob), opened as lazy Blobs
   * (fs.openAsBlob reads by range), and loaded row group by row group through Arrow.
   */
  async function registerParquet(paths: readonly string[], scan: ReturnType<typeof buildScan>, hivePartitioning: boolean): Promise<RegisteredSource> {
    const files = await listFiles(scan.patterns, paths);
    const decoder = parquetWasmDecoder(require('parquet-wasm') as ParquetWasmModule);
    const parts: ParquetPart[] = [];
    for (const file of files) parts.push({ name: file, blob: await openAsBlob(file) });
    return core.createLoadedView((tablePrefix) => loadParquet(parts, decoder, {
      append: (table, ipc, create) => core.exclusive(async () => { conn.insertArrowFromIPCStream(ipc, { name: table, create }); }),
      run: (sql) => core.exclusive(async () => { conn.query(sql); }),
    }, { tablePrefix, budgetBytes: options.parquetBudgetBytes ?? DEFAULT_BUDGET_BYTES, hivePartitioning, ...(options.parquetPieceRows ? { pieceRows: options.parquetPieceRows } : {}) }).then((l) => { options.onParquetLoad?.(l.timings); return l.selectSql; }), 'parquet', scan.sql, files);
  }

  async function listFiles(patterns: readonly string[], paths: readonly string[]): Promise<string[]> {
    try {
      return ((await core.run(globSql(patterns))).columns[0] ?? []).map(String);
    } catch (error) {
      throw toEngineError(error, { files: paths });
    }
  }

  return { ...core.engine, kind: 'wasm-node', register, get sourceScans() { return core.engine.sourceScans; } };
}
