/**
 * DuckDB-Wasm in a Web Worker (AsyncDuckDB). A picked or dropped File is registered as a handle with
 * BROWSER_FILEREADER: the worker reads only the byte ranges DuckDB asks for (FileReaderSync on slices),
 * never the whole file. Results come back as Arrow IPC bytes through the same converter as wasm-node.
 */
import { AsyncDuckDB, DuckDBDataProtocol, VoidLogger } from '@duckdb/duckdb-wasm';
import { toEngineError } from './errors.ts';
import { buildScan } from './sql-source.ts';
import { EngineError } from './types.ts';
import type { Engine, RegisteredSource, SourceSpec } from './types.ts';
import { createWasmCore } from './wasm-core.ts';
import type { WasmEngineOptions } from './wasm-core.ts';

export interface WasmBrowserBundle {
  /** URL of duckdb-eh.wasm. */
  mainModule: string;
  /** URL of duckdb-browser-eh.worker.js. */
  mainWorker: string;
}

export interface WasmBrowserEngineOptions extends WasmEngineOptions {
  /** Where the Wasm build lives; the Vite-served copy from node_modules when absent. */
  bundles?: WasmBrowserBundle;
}

export async function createWasmBrowserEngine(options: WasmBrowserEngineOptions = {}): Promise<Engine & { readonly kind: 'wasm-browser' }> {
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
    for (const [k, file] of source.files.entries()) {
      await db.registerFileHandle(names[k] as string, file, DuckDBDataProtocol.BROWSER_FILEREADER, true);
    }
    return core.createView(scan, names, names);
  }

  return { ...core.engine, kind: 'wasm-browser', register, get sourceScans() { return core.engine.sourceScans; } };
}
