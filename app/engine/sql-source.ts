/**
 * Pure builders for the SQL that exposes a log as a relation: the table-function scan
 * (read_parquet / read_csv / read_json) and the view over it. No engine, no file system: callers say
 * which paths are folders. Every string literal and name is quoted by app/core/sql/quote.ts.
 */
import type { CsvOptions, SourceFormat } from './types.ts';
import { EngineError } from './types.ts';
import { ident as quoteIdentifier, literal as quoteLiteral } from '../core/sql/quote.ts';

/** Quoting is app/core/sql/quote.ts's, under the names the engine adapters have always used. */
export { ident as quoteIdentifier, literal as quoteLiteral } from '../core/sql/quote.ts';

const EXTENSION_FORMATS: readonly (readonly [string, SourceFormat])[] = [
  ['.parquet', 'parquet'], ['.pq', 'parquet'],
  ['.csv', 'csv'], ['.tsv', 'csv'], ['.csv.gz', 'csv'], ['.tsv.gz', 'csv'], ['.csv.zst', 'csv'],
  ['.ndjson', 'ndjson'], ['.jsonl', 'ndjson'], ['.ndjson.gz', 'ndjson'], ['.jsonl.gz', 'ndjson'],
];

/** Part files looked for under a folder, per format. */
const FOLDER_PATTERN: Record<SourceFormat, string> = { parquet: '**/*.parquet', csv: '**/*.csv', ndjson: '**/*.ndjson' };

export function formatFromName(name: string): SourceFormat | undefined {
  const lower = name.toLowerCase();
  return EXTENSION_FORMATS.find(([ext]) => lower.endsWith(ext))?.[1];
}

function isTabSeparated(name: string): boolean {
  const lower = name.toLowerCase();
  return lower.endsWith('.tsv') || lower.endsWith('.tsv.gz');
}

export interface ScanRequest {
  /** Files, globs or folders exactly as the engine will open them. */
  paths: readonly string[];
  /** Which of `paths` are folders of part files. */
  folders?: readonly string[];
  format?: SourceFormat;
  csv?: CsvOptions;
  /** Defaults to true when a folder is given (key=value directories), false otherwise. */
  hivePartitioning?: boolean;
}

export interface Scan {
  format: SourceFormat;
  /** What the table function is given: files and globs, folders already turned into globs. */
  patterns: string[];
  sql: string;
}

function joinFolder(folder: string, pattern: string): string {
  return `${folder.replace(/[/\\]+$/, '')}/${pattern}`;
}

export function resolveFormat(request: ScanRequest): SourceFormat {
  if (request.paths.length === 0) throw new EngineError('io', 'No file was given for the log.');
  if (request.format) return request.format;
  const folders = new Set(request.folders ?? []);
  const named = request.paths.filter((p) => !folders.has(p));
  if (named.length === 0) return 'parquet';
  const formats = new Set(named.map((p) => {
    const f = formatFromName(p);
    if (!f) throw new EngineError('unsupported-format', `Cannot tell the format of "${p}" from its name. Use a .parquet, .csv, .tsv, .csv.gz, .ndjson or .jsonl file, or choose the format.`);
    return f;
  }));
  if (formats.size > 1) throw new EngineError('unsupported-format', `The files mix formats (${[...formats].join(', ')}); one log must be in a single format.`);
  return [...formats][0] as SourceFormat;
}

export function buildScan(request: ScanRequest): Scan {
  const format = resolveFormat(request);
  const folders = new Set(request.folders ?? []);
  const patterns = request.paths.map((p) => (folders.has(p) ? joinFolder(p, FOLDER_PATTERN[format]) : p));
  const list = `[${patterns.map(quoteLiteral).join(', ')}]`;
  let sql: string;
  if (format === 'parquet') {
    const hive = request.hivePartitioning ?? folders.size > 0;
    sql = `read_parquet(${list}, hive_partitioning=${hive})`;
  } else if (format === 'csv') {
    const options = ['auto_detect=true'];
    const delimiter = request.csv?.delimiter ?? (patterns.every(isTabSeparated) ? '\t' : undefined);
    if (delimiter !== undefined) options.push(`delim=${quoteLiteral(delimiter)}`);
    if (request.csv?.header !== undefined) options.push(`header=${request.csv.header}`);
    sql = `read_csv(${list}, ${options.join(', ')})`;
  } else {
    sql = `read_json(${list}, format='newline_delimited')`;
  }
  return { format, patterns, sql };
}

export function relationName(sequence: number): string {
  return quoteIdentifier(`src_${sequence}`);
}

/** Text logs are parsed again by every read; a projection (Engine.project) parses them once per audit. */
export const PROJECTED_FORMATS: ReadonlySet<SourceFormat> = new Set(['csv', 'ndjson']);

/**
 * The projection's name follows its relation's ("src_1" -> "src_1_columns"), so the same audit records the
 * same statements however many audits the engine ran before; `taken` holds the names still in use.
 */
export function projectionName(relation: string, taken: ReadonlySet<string>): string {
  const bare = relation.replace(/^"|"$/g, '').replaceAll('""', '"');
  for (let k = 1; ; k++) {
    const name = quoteIdentifier(k === 1 ? `${bare}_columns` : `${bare}_columns_${k}`);
    if (!taken.has(name)) return name;
  }
}

/** The temporary table of some columns of a registered relation, in the log's row order. */
export function projectionSql(name: string, relation: string, columns: readonly string[]): string {
  if (columns.length === 0) throw new EngineError('sql', 'A projection needs at least one column.');
  return `CREATE TEMP TABLE ${name} AS SELECT ${[...new Set(columns)].map((c) => quoteIdentifier(c)).join(', ')} FROM ${relation}`;
}

/** The name of a table of one audit's row groups over a relation ("src_1" -> "src_1_groups"), as projectionName names a projection. */
export function groupsName(relation: string, taken: ReadonlySet<string>): string {
  const bare = relation.replace(/^"|"$/g, '').replaceAll('""', '"');
  for (let k = 1; ; k++) {
    const name = quoteIdentifier(k === 1 ? `${bare}_groups` : `${bare}_groups_${k}`);
    if (!taken.has(name)) return name;
  }
}

/** The temporary table of a read statement's answer (Engine.materialise). */
export function materialiseSql(name: string, select: string): string {
  return `CREATE TEMP TABLE ${name} AS ${select}`;
}

export function dropProjectionSql(name: string): string {
  return `DROP TABLE IF EXISTS temp.${name}`;
}

export function createViewSql(relation: string, scanSql: string): string {
  return `CREATE OR REPLACE VIEW ${relation} AS SELECT * FROM ${scanSql}`;
}

/** Expands the scan's patterns to the files behind them, in DuckDB's glob order. */
export function globSql(patterns: readonly string[]): string {
  return patterns.map((p) => `SELECT file FROM glob(${quoteLiteral(p)})`).join(' UNION ALL ');
}

/** Whether a query reads one of the registered relations (counted as a scan of the log). */
export function readsRelation(sql: string, relations: Iterable<string>): boolean {
  // DESCRIBE reads the schema (and, for CSV, the sniffer's sample), not the rows: it is not a scan.
  if (/^\s*DESCRIBE\b/i.test(sql)) return false;
  for (const relation of relations) {
    const bare = relation.replace(/^"|"$/g, '').replaceAll('""', '"');
    const pattern = new RegExp(`(^|[^A-Za-z0-9_])("${escapeRegExp(bare)}"|${escapeRegExp(bare)})(?![A-Za-z0-9_])`, 'i');
    if (pattern.test(sql)) return true;
  }
  return false;
}

function escapeRegExp(text: string): string {
  return text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}
