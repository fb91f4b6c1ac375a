import { DuckDBInstance } from '@duckdb/node-api';
import type { DuckDBConnection } from '@duckdb/node-api';
import type { Table } from '../core/table.ts';
import { tableFromDuckDBResult } from './convert/duckdb-values.ts';
import { collapsedHeader, raggedLinesSql, raggedRowsError } from './csv-shape.ts';
import { toEngineError } from './errors.ts';
import { withFileKind } from './file-kind.ts';
import { expandSource, lockDownSql } from './file-grants.ts';
import { engineMemory } from './memory.ts';
import { foldersAmong } from './node-paths.ts';
import { assertReadStatement, STATEMENT_CHECK_SQL } from './read-only.ts';
import { buildScan, createViewSql, dropProjectionSql, globSql, groupsName, materialiseSql, PROJECTED_FORMATS, projectionName, projectionSql, readsRelation, relationName, resolveFormat } from './sql-source.ts';
import { EngineError } from './types.ts';
import type { Engine, Projection, QueryOptions, RegisteredSource, SourceFormat, SourceSpec } from './types.ts';
import { serialQueue } from './serial.ts';

export interface NativeEngineOptions {
  /** DuckDB's `threads` setting; DuckDB's default (all cores) when absent. */
  threads?: number;
  /** DuckDB's `memory_limit`, e.g. "4GB"; when absent, COUNTERWEIGHT_MEMORY_LIMIT or the machine's default (memory.ts). */
  memoryLimit?: string;
  /** The folder DuckDB spills to beyond the limit; when absent, COUNTERWEIGHT_TEMP_DIR or a per-process folder in the system temp folder. */
  tempDirectory?: string;
  /**
   * Locked: queries may read the registered files and nothing else, and nothing can write.
   * - Each file is granted by its own path (DuckDB's allowed_paths; allowed_directories stays empty),
   *   after its registration succeeded; globs and folders are expanded in Node (file-grants.ts).
   *   enable_external_access = false and lock_configuration = true keep every other file and setting out.
   *   DuckDB cannot widen the list once access is off, so a registration opens a new in-memory database
   *   with the grown list and its views (they hold no data) and swaps it in only when the new view
   *   reads; on failure the old database stays as it was, so a failed registration grants nothing.
   * - DuckDB's allowed paths may be written as well as read, so every query passes a statement gate
   *   first (read-only.ts): one SELECT (DESCRIBE, SUMMARIZE) per call, checked by DuckDB's parser.
   * - A result is capped at `maxResultRows` rows.
   * - project() makes a temporary table in the in-memory database (never a file) from a registered CSV or
   *   NDJSON relation by the engine's own statement; the gate still refuses CREATE from query().
   * - materialise() keeps the answer of one statement that passes the gate in such a table (an audit's row groups).
   * For the engine host, whose requests come from another process.
   */
  restrictFileAccess?: boolean;
  /** Row cap of one result when locked (default MAX_RESULT_ROWS). */
  maxResultRows?: number;
}

/** Far above any audit query's answer (cube cells are capped by segments.cap); a drill page is 200 rows. */
export const MAX_RESULT_ROWS = 2_000_000;

export interface NativeEngine extends Engine {
  readonly kind: 'native';
  project(relation: string, columns: readonly string[], options?: QueryOptions): Promise<Projection | null>;
  materialise(relation: string, select: string, options?: QueryOptions): Promise<Projection>;
}

export async function createNativeEngine(options: NativeEngineOptions = {}): Promise<NativeEngine> {
  // No internet and no surprise downloads: extensions are never fetched or loaded behind the user's back.
  const config: Record<string, string> = {
    autoload_known_extensions: 'false',
    autoinstall_known_extensions: 'false',
  };
  if (options.threads !== undefined) config.threads = String(options.threads);
  const memory = engineMemory(options);
  config.memory_limit = memory.memoryLimit;
  config.temp_directory = memory.tempDirectory;
  const restricted = options.restrictFileAccess === true;
  const maxRows = options.maxResultRows ?? MAX_RESULT_ROWS;
  /** Files the current database may read; grows only when a registration succeeds. */
  let granted: readonly string[] = [];
  const views = new Map<string, string>();

  async function open(files: readonly string[] = granted): Promise<{ instance: DuckDBInstance; connection: DuckDBConnection }> {
    const db = await DuckDBInstance.create(':memory:', config);
    const conn = await db.connect();
    try {
      // Query progress is tracked for the progress line and the host's progress messages; nothing prints to the terminal.
      await conn.run('SET enable_progress_bar = true; SET enable_progress_bar_print = false; SET progress_bar_time = 100');
      if (restricted) await conn.run(lockDownSql(files));
      for (const [relation, scanSql] of views) await conn.run(createViewSql(relation, scanSql));
    } catch (error) {
      conn.closeSync();
      db.closeSync();
      throw error;
    }
    return { instance: db, connection: conn };
  }

  let instance: DuckDBInstance;
  let connection: DuckDBConnection;
  try {
    ({ instance, connection } = await open());
  } catch (error) {
    throw toEngineError(error);
  }

  const relations = new Set<string>();
  const formats = new Map<string, SourceFormat>();
  /** Temporary tables made by project() and not yet released (a locked registration's new database holds none). */
  const projections = new Set<string>();
  let sequence = 0;
  let scans = 0;
  let closed = false;
  let running = false;

  const serial = serialQueue();

  function ensureOpen(): void {
    if (closed) throw new EngineError('closed', 'The engine has been closed.');
  }

  async function register(source: SourceSpec): Promise<RegisteredSource> {
    ensureOpen();
    if (source.kind !== 'path') throw new EngineError('unsupported-format', 'The native engine reads files by path; a browser File handle cannot be opened here.');
    return restricted ? registerLocked(source) : registerOpen(source);
  }

  /** Registers the source on `conn`; throws when the view does not read (or a CSV's rows are ragged). */
  async function createView(conn: DuckDBConnection, relation: string, scan: { sql: string; format: string }, files: readonly string[]): Promise<void> {
    await conn.run(createViewSql(relation, scan.sql));
    if (scan.format === 'csv') {
      const shape = collapsedHeader(await tableFromDuckDBResult(await conn.run(`DESCRIBE SELECT * FROM ${relation}`)));
      if (shape) throw raggedRowsError(files.length === 1 ? files[0] : undefined, shape, await tableFromDuckDBResult(await conn.run(raggedLinesSql(relation, shape))));
    }
  }

  function registerOpen(source: Extract<SourceSpec, { kind: 'path' }>): Promise<RegisteredSource> {
    const folders = foldersAmong(source.paths);
    const scan = buildScan({ paths: source.paths, folders, format: source.format, csv: source.csv, hivePartitioning: source.hivePartitioning });
    return serial(async () => {
      ensureOpen();
      const relation = relationName(++sequence);
      try {
        await connection.run(createViewSql(relation, scan.sql));
        const listed = await connection.run(globSql(scan.patterns));
        const files = (await listed.getRows()).map((row) => String(row[0]));
        await createView(connection, relation, scan, files);
        relations.add(relation);
        formats.set(relation, scan.format);
        views.set(relation, scan.sql);
        return { relation, format: scan.format, files, scanSql: scan.sql };
      } catch (error) {
        throw withFileKind(toEngineError(error, { files: source.paths }), source.paths, scan.format);
      }
    });
  }

  function registerLocked(source: Extract<SourceSpec, { kind: 'path' }>): Promise<RegisteredSource> {
    const folders = foldersAmong(source.paths);
    const format = resolveFormat({ paths: source.paths, folders, format: source.format });
    return serial(async () => {
      ensureOpen();
      const { files, hadFolder } = expandSource(source.paths, format);
      const scan = buildScan({ paths: files, format, csv: source.csv, hivePartitioning: source.hivePartitioning ?? hadFolder });
      const relation = relationName(++sequence);
      const grown = [...granted, ...files.filter((f) => !granted.includes(f))];
      let next: { instance: DuckDBInstance; connection: DuckDBConnection };
      try {
        next = await open(grown);
      } catch (error) {
        throw toEngineError(error);
      }
      try {
        await createView(next.connection, relation, scan, files);
      } catch (error) {
        // Rolled back: the new database (and its grants) is dropped, the old one was never touched.
        next.connection.closeSync();
        next.instance.closeSync();
        throw withFileKind(toEngineError(error, { files: source.paths }), source.paths, scan.format);
      }
      connection.closeSync();
      instance.closeSync();
      ({ instance, connection } = next);
      projections.clear();
      granted = grown;
      relations.add(relation);
      formats.set(relation, scan.format);
      views.set(relation, scan.sql);
      return { relation, format: scan.format, files, scanSql: scan.sql };
    });
  }

  /** A locked engine's query: the gate, then the statement, read up to the row cap. */
  async function runLocked(sql: string): Promise<Table> {
    const check = await (await connection.run(STATEMENT_CHECK_SQL, [sql])).getRows();
    assertReadStatement(String(check[0]?.[0] ?? ''), sql);
    const reader = await connection.streamAndReadUntil(sql, maxRows + 1);
    if (reader.currentRowCount > maxRows) {
      throw new EngineError('too-large', `The result has more than ${maxRows.toLocaleString('en')} rows, the most one answer may hold; nothing was sent.`);
    }
    return tableFromDuckDBResult(reader);
  }

  function query(sql: string, queryOptions: QueryOptions = {}): Promise<Table> {
    const { signal } = queryOptions;
    return serial(async () => {
      ensureOpen();
      if (signal?.aborted) throw new EngineError('cancelled', 'The query was cancelled.');
      if (readsRelation(sql, relations)) scans++;
      const onAbort = (): void => connection.interrupt();
      signal?.addEventListener('abort', onAbort, { once: true });
      running = true;
      try {
        return restricted ? await runLocked(sql) : await tableFromDuckDBResult(await connection.run(sql));
      } catch (error) {
        throw toEngineError(error);
      } finally {
        running = false;
        signal?.removeEventListener('abort', onAbort);
      }
    });
  }

  function project(relation: string, columns: readonly string[], { signal }: QueryOptions = {}): Promise<Projection | null> {
    return serial(async () => {
      ensureOpen();
      if (signal?.aborted) throw new EngineError('cancelled', 'The query was cancelled.');
      if (!relations.has(relation)) throw new EngineError('sql', `No log is registered as ${relation} on this engine.`);
      if (!PROJECTED_FORMATS.has(formats.get(relation) as SourceFormat)) return null;
      const name = projectionName(relation, projections);
      return temporaryTable(name, projectionSql(name, relation, columns), signal);
    });
  }

  function materialise(relation: string, select: string, { signal }: QueryOptions = {}): Promise<Projection> {
    return serial(async () => {
      ensureOpen();
      if (signal?.aborted) throw new EngineError('cancelled', 'The query was cancelled.');
      if (!relations.has(relation)) throw new EngineError('sql', `No log is registered as ${relation} on this engine.`);
      if (restricted) {
        const check = await (await connection.run(STATEMENT_CHECK_SQL, [select])).getRows();
        assertReadStatement(String(check[0]?.[0] ?? ''), select);
      }
      const name = groupsName(relation, projections);
      return temporaryTable(name, materialiseSql(name, select), signal);
    });
  }

  /** Runs the engine's own CREATE TEMP TABLE (inside serial()); the table is dropped by release(). */
  async function temporaryTable(name: string, sql: string, signal: QueryOptions['signal']): Promise<Projection> {
    scans++;
    // a Ctrl-C during the copy interrupts it as it does a query (the copy of a large CSV takes seconds)
    const onAbort = (): void => connection.interrupt();
    signal?.addEventListener('abort', onAbort, { once: true });
    running = true;
    try {
      await connection.run(sql);
    } catch (error) {
      throw toEngineError(error);
    } finally {
      running = false;
      signal?.removeEventListener('abort', onAbort);
    }
    projections.add(name);
    return {
      relation: name,
      sql,
      release: () => serial(async () => {
        if (closed || !projections.delete(name)) return;
        await connection.run(dropProjectionSql(name));
      }),
    };
  }

  return {
    kind: 'native',
    register,
    query,
    project,
    materialise,
    async cancel() {
      if (running && !closed) connection.interrupt();
    },
    get sourceScans() { return scans; },
    queryProgress() {
      if (!running || closed) return null;
      const p = connection.progress.percentage;
      return Number.isFinite(p) && p >= 0 ? p : null;
    },
    async close() {
      if (closed) return;
      if (running) connection.interrupt();
      await serial(async () => undefined);
      closed = true;
      connection.closeSync();
      instance.closeSync();
    },
  };
}
