import { DuckDBInstance } from '@duckdb/node-api';
import type { DuckDBConnection } from '@duckdb/node-api';
import type { Table } from '../core/table.ts';
import { tableFromDuckDBResult } from './convert/duckdb-values.ts';
import { toEngineError } from './errors.ts';
import { foldersAmong } from './node-paths.ts';
import { buildScan, createViewSql, globSql, readsRelation, relationName } from './sql-source.ts';
import { EngineError } from './types.ts';
import type { Engine, QueryOptions, RegisteredSource, SourceSpec } from './types.ts';

export interface NativeEngineOptions {
  /** DuckDB's `threads` setting; DuckDB's default (all cores) when absent. */
  threads?: number;
  /** DuckDB's `memory_limit`, e.g. "4GB"; DuckDB's default (80% of RAM) when absent. */
  memoryLimit?: string;
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
  let instance: DuckDBInstance;
  let connection: DuckDBConnection;
  try {
    instance = await DuckDBInstance.create(':memory:', config);
    connection = await instance.connect();
    // Progress is tracked for the host's progress events; printing it to the terminal stays off.
    await connection.run('SET enable_progress_bar = true; SET enable_progress_bar_print = false; SET progress_bar_time = 100');
  } catch (error) {
    throw toEngineError(error);
  }

  const relations = new Set<string>();
  let sequence = 0;
  let scans = 0;
  let closed = false;
  let running = false;
  let tail: Promise<unknown> = Promise.resolve();

  // One connection runs one statement at a time; later calls wait their turn.
  function serial<T>(job: () => Promise<T>): Promise<T> {
    const next = tail.then(job, job);
    tail = next.catch(() => undefined);
    return next;
  }

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
        await connection.run(createViewSql(relation, scan.sql));
        const listed = await connection.run(globSql(scan.patterns));
        const files = (await listed.getRows()).map((row) => String(row[0]));
        relations.add(relation);
        return { relation, format: scan.format, files, scanSql: scan.sql };
      } catch (error) {
        throw toEngineError(error, { files: source.paths });
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
      await tail;
      closed = true;
      connection.closeSync();
      instance.closeSync();
    },
  };
}
