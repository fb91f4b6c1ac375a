/**
 * What the two DuckDB-Wasm adapters share: the pending-query loop (so a query can be cancelled between
 * polls), Arrow IPC -> Table through the one Arrow converter, scan counting, and the extension gate.
 * DuckDB-Wasm 1.32 builds neither Parquet nor JSON in; with autoloading off, reading those formats needs an
 * explicitly configured extension repository, probed with a time-out before LOAD so nothing can hang.
 */
import type { Table } from '../core/table.ts';
import { tableFromIpcChunks } from './convert/arrow.ts';
import { collapsedHeader, raggedLinesSql, raggedRowsError } from './csv-shape.ts';
import { toEngineError } from './errors.ts';
import { createViewSql, dropProjectionSql, groupsName, materialiseSql, PROJECTED_FORMATS, projectionName, projectionSql, quoteIdentifier, quoteLiteral, readsRelation, relationName } from './sql-source.ts';
import type { Scan } from './sql-source.ts';
import { EngineError } from './types.ts';
import type { Engine, Projection, QueryOptions, RegisteredSource, SourceFormat } from './types.ts';
import { serialQueue } from './serial.ts';
import type { LoadTimings } from './parquet/load.ts';

/** DuckDB-Wasm's pending-query calls for one connection, sync (Node blocking build) or async (worker). */
export interface PendingQueryApi {
  start(sql: string): Promise<Uint8Array | null>;
  poll(): Promise<Uint8Array | null>;
  /** The next result batch; null while not ready, an empty buffer after the last one. */
  fetch(): Promise<Uint8Array | null>;
  cancel(): Promise<void>;
}

export interface WasmEngineOptions {
  /**
   * Base URL of a DuckDB extension repository holding the Wasm builds of the parquet and json extensions
   * (layout <base>/<duckdb version>/<platform>/<name>.duckdb_extension.wasm). Off by default.
   */
  extensionRepository?: string;
  /** Time allowed for fetching and loading an extension, in milliseconds. */
  extensionTimeoutMs?: number;
  /** Told where each Parquet load's time went (bench/). */
  onParquetLoad?: (timings: LoadTimings) => void;
}

const DEFAULT_EXTENSION_TIMEOUT_MS = 10_000;

// Parquet needs no extension: it is decoded to Arrow and loaded row group by row group (app/engine/parquet/).
const FORMAT_EXTENSIONS: Partial<Record<SourceFormat, { extension: string; label: string }>> = {
  ndjson: { extension: 'json', label: 'NDJSON' },
};

function extensionUnavailableMessage(label: string): string {
  return `This log is ${label}, which the in-browser engine (DuckDB-Wasm) cannot read without DuckDB's extension for it, ` +
    'and downloading extensions is switched off. Open the log in the Counterweight desktop app, or audit it with the native ' +
    'engine through the headless command (counterweight audit <log>). CSV and TSV logs work here.';
}

function wasmOutOfMemoryMessage(detail: string): string {
  return `The in-browser engine (DuckDB-Wasm) ran out of memory (${detail.replace(/^Out of memory: /, '')}). It has a few GB at most; ` +
    'open the log in the Counterweight desktop app, or audit it with the headless command (counterweight audit <log>), which use native DuckDB without that limit.';
}

/** Errors of the Wasm module itself when its heap cannot grow (V8 and browsers word them differently). */
const WASM_HEAP_EXHAUSTED = /Maximum memory size exceeded|WebAssembly\.Memory\.grow|Out of memory|Cannot enlarge memory|memory access out of bounds/i;

function asWasmError(error: unknown, files: readonly string[] | undefined): EngineError {
  const raw = error instanceof Error ? error.message : String(error);
  const e = toEngineError(error, { files });
  if (e.code === 'out-of-memory' || (e.code === 'internal' && WASM_HEAP_EXHAUSTED.test(raw))) return new EngineError('out-of-memory', wasmOutOfMemoryMessage(e.message.split('\n')[0] ?? ''));
  return e;
}

export interface WasmCoreParts {
  kind: 'wasm-node' | 'wasm-browser';
  api: PendingQueryApi;
  /** Yields to the event loop between polls so cancel() and timers can run. */
  yieldTurn: () => Promise<void>;
  close: () => Promise<void>;
}

export interface WasmCore {
  engine: Omit<Engine, 'register'>;
  /** Runs SQL outside the scan counter (setup, registration). */
  run(sql: string): Promise<Table>;
  /** Throws 'extension-unavailable' (fast) unless the format can be read, loading its extension if configured. */
  ensureFormat(format: SourceFormat, options: WasmEngineOptions): Promise<void>;
  /** Creates the view over a built scan and records it; `files` are as the engine sees them. */
  createView(scan: Scan, files: readonly string[], errorFiles: readonly string[]): Promise<RegisteredSource>;
  /**
   * Registers a relation over tables the caller loads itself (Parquet through Arrow): `load` gets a table-name
   * prefix of its own and answers the SELECT the view wraps; `scanSql` is recorded as the equivalent scan.
   */
  createLoadedView(load: (tablePrefix: string) => Promise<string>, format: SourceFormat, scanSql: string, files: readonly string[]): Promise<RegisteredSource>;
  /** Runs work between queries, never during one (loading tables on the engine's connection). */
  exclusive<T>(work: () => Promise<T>): Promise<T>;
  ensureOpen(): void;
}

export function createWasmCore(parts: WasmCoreParts): WasmCore {
  const { api, yieldTurn } = parts;
  const relations = new Set<string>();
  /** Relations over a text log (CSV), which project() may copy into a temporary table. */
  const textRelations = new Set<string>();
  const projections = new Set<string>();
  let sequence = 0;
  let scans = 0;
  let closed = false;
  let current: { cancelled: boolean } | null = null;
  const loaded = new Map<string, Promise<void>>();

  const serial = serialQueue();

  function ensureOpen(): void {
    if (closed) throw new EngineError('closed', 'The engine has been closed.');
  }

  async function execute(sql: string, token: { cancelled: boolean }): Promise<Table> {
    let header = await api.start(sql);
    while (header === null) {
      if (token.cancelled) {
        await api.cancel();
        throw new EngineError('cancelled', 'The query was cancelled.');
      }
      await yieldTurn();
      header = await api.poll();
    }
    // fetch() answers null for "not ready yet" and an empty buffer at the end of the stream.
    const chunks = [header];
    for (;;) {
      const batch = await api.fetch();
      if (batch === null) { await yieldTurn(); continue; }
      if (batch.byteLength === 0) break;
      chunks.push(batch);
    }
    return tableFromIpcChunks(chunks);
  }

  function runCounted(sql: string, options: QueryOptions, count: boolean, errorFiles?: readonly string[]): Promise<Table> {
    const { signal } = options;
    return serial(async () => {
      ensureOpen();
      if (signal?.aborted) throw new EngineError('cancelled', 'The query was cancelled.');
      if (count && readsRelation(sql, relations)) scans++;
      const token = { cancelled: false };
      const onAbort = (): void => { token.cancelled = true; };
      signal?.addEventListener('abort', onAbort, { once: true });
      current = token;
      try {
        return await execute(sql, token);
      } catch (error) {
        throw asWasmError(error, errorFiles);
      } finally {
        current = null;
        signal?.removeEventListener('abort', onAbort);
      }
    });
  }

  const run = (sql: string): Promise<Table> => runCounted(sql, {}, false);

  async function isLoaded(extension: string): Promise<boolean> {
    const t = await run(`SELECT count(*)::INTEGER AS n FROM duckdb_extensions() WHERE extension_name = ${quoteLiteral(extension)} AND loaded`);
    return t.columns[0]?.[0] === 1;
  }

  async function loadExtension(extension: string, label: string, repository: string, timeoutMs: number): Promise<void> {
    const fail = (why: string): EngineError => new EngineError('extension-unavailable', `${extensionUnavailableMessage(label)} (${why})`);
    const info = await run('SELECT version() AS v, (SELECT platform FROM pragma_platform()) AS p');
    const url = `${repository.replace(/\/+$/, '')}/${String(info.columns[0]?.[0])}/${String(info.columns[1]?.[0])}/${extension}.duckdb_extension.wasm`;
    // DuckDB-Wasm fetches extensions with a blocking request that has no time-out of its own, so the
    // repository is probed first with one; only a repository that answers in time is handed to LOAD.
    try {
      const response = await fetch(url, { signal: AbortSignal.timeout(timeoutMs) });
      await response.body?.cancel();
      if (!response.ok) throw fail(`the extension repository answered ${response.status} for ${url}`);
    } catch (error) {
      if (error instanceof EngineError) throw error;
      const timedOut = error instanceof Error && (error.name === 'TimeoutError' || error.name === 'AbortError');
      throw fail(timedOut ? `no answer from ${url} within ${timeoutMs} ms` : `cannot reach ${url}`);
    }
    let timer: ReturnType<typeof setTimeout> | undefined;
    const timeout = new Promise<never>((_, reject) => {
      timer = setTimeout(() => reject(fail(`loading ${extension} took longer than ${timeoutMs} ms`)), timeoutMs);
    });
    try {
      await Promise.race([
        run(`SET custom_extension_repository = ${quoteLiteral(repository)}`).then(() => run(`LOAD ${quoteIdentifier(extension)}`)),
        timeout,
      ]);
    } catch (error) {
      throw error instanceof EngineError && error.code === 'extension-unavailable' ? error : fail(toEngineError(error).message);
    } finally {
      clearTimeout(timer);
    }
  }

  async function ensureFormat(format: SourceFormat, options: WasmEngineOptions): Promise<void> {
    ensureOpen();
    const need = FORMAT_EXTENSIONS[format];
    if (!need) return;
    if (await isLoaded(need.extension)) return;
    if (!options.extensionRepository) throw new EngineError('extension-unavailable', extensionUnavailableMessage(need.label));
    const { extensionRepository } = options;
    let pending = loaded.get(need.extension);
    if (!pending) {
      pending = loadExtension(need.extension, need.label, extensionRepository, options.extensionTimeoutMs ?? DEFAULT_EXTENSION_TIMEOUT_MS);
      loaded.set(need.extension, pending);
      pending.catch(() => loaded.delete(need.extension));
    }
    await pending;
  }

  async function createView(scan: Scan, files: readonly string[], errorFiles: readonly string[]): Promise<RegisteredSource> {
    const relation = relationName(++sequence);
    await runCounted(createViewSql(relation, scan.sql), {}, false, errorFiles);
    if (scan.format === 'csv') {
      const shape = collapsedHeader(await runCounted(`DESCRIBE SELECT * FROM ${relation}`, {}, false, errorFiles));
      if (shape) throw raggedRowsError(files.length === 1 ? files[0] : undefined, shape, await runCounted(raggedLinesSql(relation, shape), {}, false, errorFiles));
    }
    relations.add(relation);
    if (PROJECTED_FORMATS.has(scan.format)) textRelations.add(relation);
    return { relation, format: scan.format, files, scanSql: scan.sql };
  }

  async function createLoadedView(load: (tablePrefix: string) => Promise<string>, format: SourceFormat, scanSql: string, files: readonly string[]): Promise<RegisteredSource> {
    const k = ++sequence;
    const relation = relationName(k);
    const selectSql = await load(`src_${k}_part`);
    await runCounted(`CREATE OR REPLACE VIEW ${relation} AS ${selectSql}`, {}, false, files);
    relations.add(relation);
    return { relation, format, files, scanSql };
  }

  const exclusive = <T>(work: () => Promise<T>): Promise<T> => serial(async () => {
    ensureOpen();
    try {
      return await work();
    } catch (error) {
      throw asWasmError(error, undefined);
    }
  });

  /** One parse of a CSV for the statements of an audit: a temporary table in DuckDB-Wasm's own memory. */
  async function project(relation: string, columns: readonly string[], options: QueryOptions = {}): Promise<Projection | null> {
    ensureOpen();
    if (!relations.has(relation)) throw new EngineError('sql', `No log is registered as ${relation} on this engine.`);
    if (!textRelations.has(relation)) return null;
    const name = projectionName(relation, projections);
    return keepTemp(name, projectionSql(name, relation, columns), options);
  }

  /** Runs the statement that creates the temporary table `name` and hands it out until it is released. */
  async function keepTemp(name: string, sql: string, options: QueryOptions): Promise<Projection> {
    await runCounted(sql, options, true);
    projections.add(name);
    return {
      relation: name,
      sql,
      release: async () => {
        if (closed || !projections.delete(name)) return;
        await run(dropProjectionSql(name));
      },
    };
  }

  /** An audit's row groups kept in a temporary table in DuckDB-Wasm's own memory (Engine.materialise). */
  async function materialise(relation: string, select: string, options: QueryOptions = {}): Promise<Projection> {
    ensureOpen();
    if (!relations.has(relation)) throw new EngineError('sql', `No log is registered as ${relation} on this engine.`);
    const name = groupsName(relation, projections);
    return keepTemp(name, materialiseSql(name, select), options);
  }

  return {
    engine: {
      kind: parts.kind,
      query: (sql, options = {}) => runCounted(sql, options, true),
      project,
      materialise,
      async cancel() {
        if (current) current.cancelled = true;
      },
      get sourceScans() { return scans; },
      async close() {
        if (closed) return;
        if (current) current.cancelled = true;
        await serial(async () => undefined);
        closed = true;
        await parts.close();
      },
    },
    run,
    ensureFormat,
    createView,
    createLoadedView,
    exclusive,
    ensureOpen,
  };
}
