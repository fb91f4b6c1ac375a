import path from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import type { DuckDBConnection } from '@duckdb/node-api';
import type { Table } from '../core/table.ts';
import { tableFromDuckDBResult } from './convert/duckdb-values.ts';
import { collapsedHeader, raggedLinesSql, raggedRowsError } from './csv-shape.ts';
import { toEngineError } from './errors.ts';
import { withFileKind } from './file-kind.ts';
import { foldersAmong } from './node-paths.ts';
import { buildScan, createViewSql, globSql, quoteLiteral, readsRelation, relationName } from './sql-source.ts';
import { EngineError } from './types.ts';
import type { Engine, QueryOptions, RegisteredSource, SourceSpec } from './types.ts';
import { serialQueue } from './serial.ts';

export interface NativeEngineOptions {
  /** DuckDB's `threads` setting; DuckDB's default (all cores) when absent. */
  threads?: number;
  /** DuckDB's `memory_limit`, e.g. "4GB"; DuckDB's default (80% of RAM) when absent. */
  memoryLimit?: string;
  /**
   * Queries may read the registered sources and nothing else: no other file (read_csv('/any/file')),
   * no COPY ... TO, ATTACH or extension install, and no setting can be changed back (DuckDB's
   * enable_external_access = false with allowed_paths / allowed_directories, then lock_configuration).
   * DuckDB cannot widen the allow-list once access is off, so each register() reopens the in-memory
   * database with the grown list and recreates the views (they hold no data). For the engine host,
   * whose query messages come from another process.
   */
  restrictFileAccess?: boolean;
}

export interface QueryProgress {
  /** Percent done as DuckDB estimates it, or -1 when it cannot tell. */
  percentage: number;
  rowsProcessed: number;
  totalRows: number;
}

export interface NativeEngine extends Engine {
  readonly kind: 'native';
  /** Progress of the running query (DuckDB's query progress), for the engine host's progress events. */
  progress(): QueryProgress;
}

export async function createNativeEngine(options: NativeEngineOptions = {}): Promise<NativeEngine> {
  // No internet and no surprise downloads: extensions are never fetched or loaded behind the user's back.
  const config: Record<string, string> = {
    autoload_known_extensions: 'false',
    autoinstall_known_extensions: 'false',
  };
  if (options.threads !== undefined) config.threads = String(options.threads);
  if (options.memoryLimit !== undefined) config.memory_limit = options.memoryLimit;
  const restricted = options.restrictFileAccess === true;
  const allowed = { paths: new Set<string>(), directories: new Set<string>() };
  const views = new Map<string, string>();

  async function open(): Promise<{ instance: DuckDBInstance; connection: DuckDBConnection }> {
    const db = await DuckDBInstance.create(':memory:', config);
    const conn = await db.connect();
    try {
      // Progress is tracked for the host's progress events; printing it to the terminal stays off.
      await conn.run('SET enable_progress_bar = true; SET enable_progress_bar_print = false; SET progress_bar_time = 100');
      if (restricted) await conn.run(lockDownSql(allowed.paths, allowed.directories));
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
    const folders = foldersAmong(source.paths);
    const scan = buildScan({ paths: source.paths, folders, format: source.format, csv: source.csv, hivePartitioning: source.hivePartitioning });
    return serial(async () => {
      ensureOpen();
      const relation = relationName(++sequence);
      try {
        if (restricted) {
          const grant = accessFor(scan.patterns, folders);
          grant.paths.forEach((p) => allowed.paths.add(p));
          grant.directories.forEach((d) => allowed.directories.add(d));
          const next = await open();
          connection.closeSync();
          instance.closeSync();
          ({ instance, connection } = next);
        }
        await connection.run(createViewSql(relation, scan.sql));
        const listed = await connection.run(globSql(scan.patterns));
        const files = (await listed.getRows()).map((row) => String(row[0]));
        if (scan.format === 'csv') {
          const shape = collapsedHeader(await tableFromDuckDBResult(await connection.run(`DESCRIBE SELECT * FROM ${relation}`)));
          if (shape) throw raggedRowsError(files.length === 1 ? files[0] : undefined, shape, await tableFromDuckDBResult(await connection.run(raggedLinesSql(relation, shape))));
        }
        relations.add(relation);
        views.set(relation, scan.sql);
        return { relation, format: scan.format, files, scanSql: scan.sql };
      } catch (error) {
        throw withFileKind(toEngineError(error, { files: source.paths }), source.paths, scan.format);
      }
    });
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
        return await tableFromDuckDBResult(await connection.run(sql));
      } catch (error) {
        throw toEngineError(error);
      } finally {
        running = false;
        signal?.removeEventListener('abort', onAbort);
      }
    });
  }

  return {
    kind: 'native',
    register,
    query,
    async cancel() {
      if (running && !closed) connection.interrupt();
    },
    get sourceScans() { return scans; },
    progress() {
      if (!running || closed) return { percentage: -1, rowsProcessed: 0, totalRows: 0 };
      const p = connection.progress;
      return { percentage: p.percentage, rowsProcessed: Number(p.rows_processed), totalRows: Number(p.total_rows_to_process) };
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

/** What a restricted engine must be allowed to read for a scan: each named file, and the folder of a glob or folder. */
export function accessFor(patterns: readonly string[], folders: readonly string[]): { paths: string[]; directories: string[] } {
  const paths: string[] = [];
  const directories: string[] = [];
  const folderSet = new Set(folders.map((f) => path.resolve(f)));
  for (const pattern of patterns) {
    const wild = pattern.search(/[*?[{]/);
    if (wild < 0) {
      paths.push(path.resolve(pattern));
      continue;
    }
    const dir = path.resolve(pattern.slice(0, wild).replace(/[^/\\]*$/, '') || '.');
    directories.push(dir.endsWith(path.sep) ? dir : `${dir}${path.sep}`);
  }
  for (const f of folderSet) if (!directories.some((d) => `${f}${path.sep}`.startsWith(d))) directories.push(`${f}${path.sep}`);
  return { paths, directories };
}

/** Settings that confine DuckDB to the allowed files; order matters (allow-lists cannot change once access is off). */
export function lockDownSql(paths: Iterable<string>, directories: Iterable<string>): string {
  const list = (xs: Iterable<string>) => `[${[...xs].map(quoteLiteral).join(', ')}]`;
  return [
    `SET allowed_paths = ${list(paths)}`,
    `SET allowed_directories = ${list(directories)}`,
    'SET enable_external_access = false',
    'SET lock_configuration = true',
  ].join('; ');
}
