/**
 * Parquet into DuckDB-Wasm without its parquet extension: each part's footer is read by range, checked
 * (one schema across parts, codecs and types the decoder reads, the memory the columns will take), then
 * each row group is decoded to Arrow and appended to a table of that part, one row group at a time, so
 * at most one row group's Arrow is ever in JavaScript memory. The relation the audit reads is a view over
 * the parts' tables that gives every column the type native DuckDB's read_parquet gives it.
 */
import type { FileMetaData } from 'hyparquet';
import { quoteIdentifier, quoteLiteral } from '../sql-source.ts';
import { EngineError } from '../types.ts';
import { DUCKDB_ROW_GROUP_ROWS, rowGroupAligner } from './align.ts';
import type { RowGroupDecoder } from './decoder.ts';
import { enumValues } from './dictionary.ts';
import { readFooter } from './footer.ts';
import { hiveValues, loadedBytes, topLevelColumns, unreadableColumn } from './schema.ts';
import type { ParquetColumn } from './schema.ts';

export interface ParquetPart {
  /** The name errors and the report use (a path in Node, the registered name in the browser). */
  readonly name: string;
  readonly blob: Blob;
}

/** Where the row groups go: DuckDB-Wasm's Arrow insert, on the engine's connection. */
export interface ArrowSink {
  /** Appends an Arrow IPC stream to `table` (a bare name), creating the table from the first one. */
  append(table: string, ipc: Uint8Array, create: boolean): Promise<void>;
  /** Runs one statement that returns nothing (the ENUM columns' ALTER TABLE). */
  run(sql: string): Promise<void>;
}

export interface LoadOptions {
  /** Prefix of the parts' table names; each part gets `<prefix>_<k>`. */
  readonly tablePrefix: string;
  /** Memory the loaded columns may take, in bytes. */
  readonly budgetBytes: number;
  readonly hivePartitioning: boolean;
  /** Rows of each append, a multiple of DuckDB's row-group size (align.ts); APPEND_ROWS when absent. */
  readonly pieceRows?: number;
  /** Called after each row group, with rows loaded so far and in all. */
  readonly onRowGroup?: (loaded: number, total: number) => void;
  /** Keep low-cardinality text columns as ENUMs (dictionary.ts); true when absent. */
  readonly enumColumns?: boolean;
}

/**
 * Where a load's time went, in milliseconds (for bench/: decoding and appending overlap, so the parts add
 * up to more than the wall time): `decode` the decoder's answers (in the browser, the decode worker's work
 * plus the transfer), `align` re-cutting into DuckDB row groups, `append` DuckDB-Wasm's Arrow inserts,
 * `waitAppend` time the next decode was ready but the previous append was not done, `dictionary` reading the
 * text columns' dictionary pages, `enum` making those columns ENUMs (or text again).
 */
export interface LoadTimings {
  wall: number;
  dictionary: number;
  enum: number;
  decode: number;
  align: number;
  append: number;
  waitAppend: number;
  appends: number;
}

export interface LoadedParquet {
  /** SELECT over the parts' tables, with native DuckDB's column types. */
  readonly selectSql: string;
  readonly rows: number;
  readonly estimatedBytes: number;
  readonly timings: LoadTimings;
}

/**
 * Rows of each Arrow append: four DuckDB row groups. Each of DuckDB-Wasm's inserts has a fixed cost of its
 * own; on the 10M-row log 82 appends of one row group took 46.8 s in Node, 21 of four 29.1 s, 11 of eight
 * 33.4 s (load average 7–14, bench/NOTES.md "Fewer, larger appends"). A piece is about 30 MB of Arrow.
 */
export const APPEND_ROWS = 4 * DUCKDB_ROW_GROUP_ROWS;

/** Default budget: DuckDB-Wasm is a 32-bit build (4 GiB of memory at most), and the audit's queries need room too. */
export const DEFAULT_BUDGET_BYTES = 2 * 1024 ** 3;

function formatBytes(bytes: number): string {
  return bytes >= 1024 ** 3 ? `${(bytes / 1024 ** 3).toFixed(1)} GB` : `${Math.max(1, Math.round(bytes / 1024 ** 2))} MB`;
}

export function tooLargeMessage(name: string, needed: number, budget: number, rows: number): string {
  const fits = Math.floor(rows * (budget / needed));
  return `"${name}" is too large for the in-browser engine: its ${rows.toLocaleString('en')} rows take about ${formatBytes(needed)} once loaded, ` +
    `and DuckDB-Wasm here holds about ${formatBytes(budget)} (about ${fits.toLocaleString('en')} rows of these columns). ` +
    'Open the log in the Counterweight desktop app, or audit it with the headless command (counterweight audit <log>), which read Parquet in place without that limit.';
}

function sameSchemaError(column: string, first: string, other: string): EngineError {
  return new EngineError('io', `Cannot read the log: the files do not share one schema: column "${column}" was read from the original file "${first}", but could not be found in file "${other}". Audit files with the same columns together.`);
}

function checkSameSchema(parts: readonly ParquetPart[], columns: readonly ParquetColumn[][]): void {
  const first = columns[0] ?? [];
  for (let k = 1; k < parts.length; k++) {
    const names = new Set((columns[k] ?? []).map((c) => c.name));
    const missing = first.find((c) => !names.has(c.name));
    if (missing) throw sameSchemaError(missing.name, parts[0]?.name ?? '', parts[k]?.name ?? '');
    const firstNames = new Set(first.map((c) => c.name));
    const extra = (columns[k] ?? []).find((c) => !firstNames.has(c.name));
    if (extra) throw sameSchemaError(extra.name, parts[k]?.name ?? '', parts[0]?.name ?? '');
  }
}

/** The hive columns' SQL type: BIGINT when every value is an integer, text otherwise. */
function hiveType(values: readonly string[]): 'BIGINT' | 'VARCHAR' {
  return values.every((v) => /^-?\d{1,18}$/.test(v)) ? 'BIGINT' : 'VARCHAR';
}

async function decodeRowGroup(reader: Awaited<ReturnType<RowGroupDecoder>>, part: ParquetPart, index: number, columns: readonly ParquetColumn[], rows: number): Promise<Uint8Array> {
  try {
    return await reader.rowGroup(index, columns.map((c) => c.name), rows);
  } catch (error) {
    // Find the column that fails, so the message can name it.
    for (const c of columns) {
      try {
        await reader.rowGroup(index, [c.name], rows);
      } catch {
        throw new EngineError('io', `Cannot read "${part.name}": column "${c.name}" cannot be decoded in row group ${index + 1} (${decoderMessage(error)}).`);
      }
    }
    throw new EngineError('io', `Cannot read "${part.name}": row group ${index + 1} cannot be decoded (${decoderMessage(error)}).`);
  }
}

function decoderMessage(error: unknown): string {
  return (error instanceof Error ? error.message : String(error)).split('\n')[0] ?? '';
}

/**
 * A part's table with its low-cardinality text columns as ENUMs: made so after the first piece created the
 * table, then each piece's text is cast to the ENUM as DuckDB appends it. Should a piece hold a value the
 * dictionaries did not list, the append fails as a whole (DuckDB's statements are atomic), the columns go back
 * to text and the piece is appended again: the result is the same table of text a plain load makes.
 */
class TextAsEnums {
  private active = false;
  private values: ReadonlyMap<string, readonly string[]> = new Map();
  /** `values` is read while the first row groups decode; it is awaited when the first piece has made the table. */
  constructor(private readonly table: string, private readonly sink: ArrowSink, private readonly pending: Promise<ReadonlyMap<string, readonly string[]>>) {
    // Not awaited until apply(); a failure there must not go unobserved meanwhile.
    pending.catch(() => undefined);
  }

  async apply(): Promise<void> {
    this.values = await this.pending;
    this.active = this.values.size > 0;
    if (!this.active) return;
    try {
      for (const [column, values] of this.values) {
        await this.sink.run(`ALTER TABLE ${this.table} ALTER ${quoteIdentifier(column)} SET DATA TYPE ENUM(${values.map(quoteLiteral).join(', ')})`);
      }
    } catch {
      await this.revert();
    }
  }

  async append(piece: Uint8Array): Promise<void> {
    try {
      await this.sink.append(this.table.slice(1, -1), piece, false);
    } catch (error) {
      if (!this.active) throw error;
      await this.revert();
      await this.sink.append(this.table.slice(1, -1), piece, false);
    }
  }

  private async revert(): Promise<void> {
    this.active = false;
    for (const column of this.values.keys()) {
      await this.sink.run(`ALTER TABLE ${this.table} ALTER ${quoteIdentifier(column)} SET DATA TYPE VARCHAR`);
    }
  }
}

export async function loadParquet(parts: readonly ParquetPart[], decoder: RowGroupDecoder, sink: ArrowSink, options: LoadOptions): Promise<LoadedParquet> {
  if (parts.length === 0) throw new EngineError('io', 'No file was given for the log.');
  const footers: FileMetaData[] = [];
  for (const part of parts) footers.push(await readFooter(part.blob, part.name));
  const columns = footers.map(topLevelColumns);
  checkSameSchema(parts, columns);
  for (const [k, footer] of footers.entries()) {
    const bad = unreadableColumn(footer, columns[k] ?? []);
    if (bad) throw new EngineError('unsupported-format', `Cannot read "${parts[k]?.name}": column "${bad.column}": ${bad.why}. Open the log in the Counterweight desktop app, or audit it with the headless command (counterweight audit <log>).`);
  }
  const rows = footers.reduce((sum, f) => sum + Number(f.num_rows), 0);
  const estimatedBytes = footers.reduce((sum, f, k) => sum + loadedBytes(f, columns[k] ?? []), 0);
  if (estimatedBytes > options.budgetBytes) throw new EngineError('out-of-memory', tooLargeMessage(parts.length === 1 ? parts[0]?.name ?? '' : `${parts[0]?.name} and ${parts.length - 1} more`, estimatedBytes, options.budgetBytes, rows));

  const hive = options.hivePartitioning ? parts.map((p) => hiveValues(p.name)) : parts.map(() => []);
  const hiveKeys = [...new Set(hive.flat().map(([k]) => k))].filter((k) => !(columns[0] ?? []).some((c) => c.name === k));
  const hiveTypes = new Map(hiveKeys.map((key) => [key, hiveType(hive.map((h) => h.find(([k]) => k === key)?.[1] ?? ''))]));

  let loaded = 0;
  const selects: string[] = [];
  const started = performance.now();
  const timings: LoadTimings = { wall: 0, dictionary: 0, enum: 0, decode: 0, align: 0, append: 0, waitAppend: 0, appends: 0 };
  const timed = async <T>(key: 'decode' | 'append' | 'waitAppend' | 'dictionary' | 'enum', work: Promise<T>): Promise<T> => {
    const t0 = performance.now();
    try {
      return await work;
    } finally {
      timings[key] += performance.now() - t0;
    }
  };
  for (const [k, part] of parts.entries()) {
    const footer = footers[k] as FileMetaData;
    const partColumns = columns[k] ?? [];
    const table = quoteIdentifier(`${options.tablePrefix}_${k + 1}`);
    const reader = await decoder(part.blob);
    try {
      if (footer.row_groups.length === 0 || partColumns.length === 0) {
        throw new EngineError('io', `Cannot read "${part.name}": the Parquet file has no columns or no row groups.`);
      }
      // The next row group is decoded while the engine appends the one before (in the browser they run on
      // two threads); so at most two row groups' Arrow exist at once. The engine gets pieces of whole
      // DuckDB row groups (align.ts), the first of which creates the part's table.
      const aligner = rowGroupAligner(options.pieceRows ?? APPEND_ROWS);
      const enums = new TextAsEnums(table, sink, options.enumColumns === false ? Promise.resolve(new Map()) : timed('dictionary', enumValues(part.blob, footer, partColumns)));
      let created = false;
      let appending: Promise<void> | null = null;
      const appendPieces = (pieces: readonly Uint8Array[], groupRows: number) => {
        const after = appending;
        appending = (async () => {
          if (after) await after;
          for (const piece of pieces) {
            if (!created) {
              await timed('append', sink.append(table.slice(1, -1), piece, true));
              await timed('enum', enums.apply());
            } else {
              await timed('append', enums.append(piece));
            }
            timings.appends++;
            created = true;
          }
          loaded += groupRows;
          options.onRowGroup?.(loaded, rows);
        })();
        // A failed append is awaited (and thrown) in turn; it must not go unobserved meanwhile.
        appending.catch(() => undefined);
      };
      let last: Uint8Array | null = null;
      for (const [index, group] of footer.row_groups.entries()) {
        last = await timed('decode', decodeRowGroup(reader, part, index, partColumns, Number(group.num_rows)));
        const a0 = performance.now();
        const pieces = aligner.push(last);
        timings.align += performance.now() - a0;
        if (appending) await timed('waitAppend', appending);
        appendPieces(pieces, Number(group.num_rows));
      }
      const rest = aligner.rest();
      // A part whose row groups hold no rows still gets its (empty) table.
      const tail = rest ?? (created || !last ? null : last);
      if (appending) await appending;
      if (tail) appendPieces([tail], 0);
      await appending;
    } finally {
      reader.close();
    }
    // The same column order and types as native DuckDB: the first part's order, then the hive keys.
    const list = (columns[0] ?? []).map((c) => {
      const own = partColumns.find((x) => x.name === c.name) ?? c;
      return own.duckdbType ? `CAST(${quoteIdentifier(c.name)} AS ${own.duckdbType}) AS ${quoteIdentifier(c.name)}` : quoteIdentifier(c.name);
    });
    for (const key of hiveKeys) {
      const value = hive[k]?.find(([kk]) => kk === key)?.[1];
      list.push(`CAST(${value === undefined ? 'NULL' : quoteLiteral(value)} AS ${hiveTypes.get(key)}) AS ${quoteIdentifier(key)}`);
    }
    selects.push(`SELECT ${list.join(', ')} FROM ${table}`);
  }
  timings.wall = performance.now() - started;
  return { selectSql: selects.join(' UNION ALL '), rows, estimatedBytes, timings };
}
