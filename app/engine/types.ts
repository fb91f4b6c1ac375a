import type { CancelSignal } from '../core/cancel.ts';
import type { Table } from '../core/table.ts';

export type SourceFormat = 'parquet' | 'csv' | 'ndjson';

/** Where a log lives. Paths are Node-side (native, host, wasm-node); `file` is a browser File handle. */
export type SourceSpec =
  | { kind: 'path'; paths: string[]; format?: SourceFormat; csv?: CsvOptions; hivePartitioning?: boolean }
  | { kind: 'file'; files: File[]; format?: SourceFormat; csv?: CsvOptions };

export interface CsvOptions {
  delimiter?: string;
  header?: boolean;
}

export interface RegisteredSource {
  /** A quoted relation name usable in FROM, e.g. "src_1" (a view over read_parquet/read_csv). */
  readonly relation: string;
  readonly format: SourceFormat;
  /** The files behind it after glob/folder expansion (as the engine sees them). */
  readonly files: readonly string[];
  /** The table function SQL the view wraps, for the report. */
  readonly scanSql: string;
}

/**
 * A temporary table in the engine's own in-memory database holding some columns of a registered text log
 * (CSV, NDJSON), so the statements of one audit parse the file once (Engine.project). Never a file.
 */
export interface Projection {
  /** The quoted name to read it by, e.g. "src_1_columns". */
  readonly relation: string;
  /** The statement that made it, for the report's queries. */
  readonly sql: string;
  /** Drops the table; the memory is free again. */
  release(): Promise<void>;
}

export interface QueryOptions {
  signal?: CancelSignal;
}

export interface Engine {
  readonly kind: 'native' | 'wasm-node' | 'wasm-browser' | 'host' | 'clickhouse';
  register(source: SourceSpec): Promise<RegisteredSource>;
  query(sql: string, options?: QueryOptions): Promise<Table>;
  /** Interrupts the running query, if any; the pending query rejects with EngineError code 'cancelled'. */
  cancel(): Promise<void>;
  /**
   * Copies `columns` of a registered CSV or NDJSON relation into a temporary table of the engine's in-memory
   * database (one parse of the file) for the statements of one audit; null for a source that is cheap to read
   * again (Parquet, Arrow already loaded, a server's table). The statement is the engine's own, built from a
   * registered relation and quoted column names; query() still runs reads only. Absent on engines without it.
   */
  project?(relation: string, columns: readonly string[], options?: QueryOptions): Promise<Projection | null>;
  /**
   * Keeps the answer of one read statement over a registered relation (an audit's row groups,
   * app/core/scan/cube.ts cubeGroupsSelect) in a temporary table of the engine's in-memory database, named after
   * the relation, for the statements of one audit. The statement passes the same gate as query(); the table is
   * the engine's own, never a file. Absent on engines without it.
   */
  materialise?(relation: string, select: string, options?: QueryOptions): Promise<Projection>;
  /** How many queries so far read a registered source (scans of the log), for the scan budget test. */
  readonly sourceScans: number;
  /** The running query's share of its input read, 0…100 (DuckDB's query progress); null when nothing runs or the engine cannot tell. */
  queryProgress?(): number | null;
  close(): Promise<void>;
}

/**
 * 'too-large': a result past the row or byte cap of one answer. 'unreachable', 'auth', 'timeout': a database
 * server that cannot be reached, refuses the credentials, or does not answer in time.
 */
export const ENGINE_ERROR_CODES = ['cancelled', 'sql', 'io', 'unsupported-format', 'extension-unavailable', 'out-of-memory', 'too-large', 'closed', 'internal', 'unreachable', 'auth', 'timeout'] as const;
export type EngineErrorCode = (typeof ENGINE_ERROR_CODES)[number];

export class EngineError extends Error {
  constructor(readonly code: EngineErrorCode, message: string) {
    super(message);
    this.name = 'EngineError';
  }
}
