/**
 * ClickHouse's TabSeparatedWithNamesAndTypes output (names line, types line, one line per row) to the
 * plain Table of app/core/table.ts. ClickHouse values are converted here, once, by the same rules the
 * DuckDB adapters follow, and each column is given the DuckDB type name of its values.
 * Format: ClickHouse documentation, "Formats for Input and Output Data", TabSeparated (escapes \t \n \\
 * \' \b \f \r \0, NULL as \N, nan / inf / -inf for non-finite floats); arrays as [v,'s',...].
 */
import type { Cell, Table } from '../core/table.ts';
import { EngineError } from './types.ts';

type Convert = (text: string) => Cell;

interface ColumnType {
  readonly duckdb: string;
  readonly convert: Convert;
  /** an Array field is written with the quoted-string escapes of its elements only, not TSV-escaped again */
  readonly raw?: boolean;
}

const ESCAPES: Readonly<Record<string, string>> = { t: '\t', n: '\n', '\\': '\\', "'": "'", b: '\b', f: '\f', r: '\r', '0': '\0', a: '\x07', v: '\v', N: 'N' };

export function unescapeTsv(field: string): string {
  if (!field.includes('\\')) return field;
  let out = '';
  for (let i = 0; i < field.length; i++) {
    const ch = field[i] as string;
    if (ch !== '\\' || i === field.length - 1) { out += ch; continue; }
    const next = field[++i] as string;
    out += ESCAPES[next] ?? next;
  }
  return out;
}

function float(text: string): number {
  if (text === 'nan' || text === '-nan') return NaN;
  if (text === 'inf' || text === '+inf') return Infinity;
  if (text === '-inf') return -Infinity;
  const v = Number(text);
  if (Number.isNaN(v)) throw new EngineError('internal', `ClickHouse sent "${text}" where a number was expected`);
  return v;
}

/** "YYYY-MM-DD hh:mm:ss[.fff]" in UTC to "YYYY-MM-DDThh:mm:ss.ffffffZ" (app/core/table.ts). */
function timestamp(text: string): string {
  const m = /^(\d{4}-\d{2}-\d{2}) (\d{2}:\d{2}:\d{2})(?:\.(\d{1,9}))?$/.exec(text);
  if (!m) throw new EngineError('internal', `ClickHouse sent "${text}" where a date and time was expected`);
  return `${m[1]}T${m[2]}.${(m[3] ?? '').padEnd(6, '0').slice(0, 6)}Z`;
}

/** An Array(...) value as ClickHouse writes it inside one TSV field (after unescaping): [1,2], ['a','b'], [[1],[2]]. */
function parseArray(text: string, element: ColumnType): Cell[] {
  let i = 0;
  const fail = (): never => { throw new EngineError('internal', `ClickHouse sent an array this reader cannot parse: ${text.slice(0, 80)}`); };
  const value = (): Cell => {
    if (text[i] === '[') return list();
    if (text[i] === "'") {
      let s = '';
      i++;
      while (i < text.length && text[i] !== "'") {
        if (text[i] === '\\') { s += ESCAPES[text[i + 1] as string] ?? text[i + 1]; i += 2; } else s += text[i++];
      }
      if (text[i] !== "'") fail();
      i++;
      return element.convert(s);
    }
    const start = i;
    while (i < text.length && text[i] !== ',' && text[i] !== ']') i++;
    const raw = text.slice(start, i);
    return raw === 'NULL' ? null : element.convert(raw);
  };
  const list = (): Cell[] => {
    if (text[i] !== '[') fail();
    i++;
    const out: Cell[] = [];
    if (text[i] === ']') { i++; return out; }
    for (;;) {
      out.push(value());
      if (text[i] === ',') { i++; continue; }
      if (text[i] === ']') { i++; return out; }
      fail();
    }
  };
  const result = list();
  if (i !== text.length) fail();
  return result;
}

const INTS: Readonly<Record<string, string>> = { Int8: 'TINYINT', Int16: 'SMALLINT', Int32: 'INTEGER', UInt8: 'UTINYINT', UInt16: 'USMALLINT', UInt32: 'UINTEGER' };
const BIG_INTS: Readonly<Record<string, string>> = { Int64: 'BIGINT', UInt64: 'UBIGINT', Int128: 'HUGEINT', UInt128: 'UHUGEINT' };

/** A ClickHouse type name (as the types line writes it) to its DuckDB name and value conversion. */
export function columnType(name: string): ColumnType {
  const wrapped = /^(Nullable|LowCardinality)\((.*)\)$/.exec(name);
  if (wrapped) return columnType(wrapped[2] as string);
  if (INTS[name]) return { duckdb: INTS[name] as string, convert: (t) => Number(t) };
  if (BIG_INTS[name]) return { duckdb: BIG_INTS[name] as string, convert: (t) => BigInt(t) };
  if (name === 'Float32') return { duckdb: 'FLOAT', convert: float };
  if (name === 'Float64') return { duckdb: 'DOUBLE', convert: float };
  if (name === 'Bool') return { duckdb: 'BOOLEAN', convert: (t) => t === 'true' || t === '1' };
  const decimal = /^Decimal(?:32|64|128|256)?\((\d+),\s*(\d+)\)$/.exec(name);
  if (decimal) return { duckdb: `DECIMAL(${decimal[1]},${decimal[2]})`, convert: (t) => t };
  if (name === 'Date' || name === 'Date32') return { duckdb: 'DATE', convert: (t) => t };
  // A DateTime without a zone is written in the server's zone; the engine refuses servers not on UTC.
  if (/^DateTime(64)?(\(.*\))?$/.test(name)) return { duckdb: 'TIMESTAMP', convert: timestamp };
  if (name === 'String' || /^FixedString\(\d+\)$/.test(name) || name === 'UUID' || /^Enum(8|16)?\(/.test(name)) return { duckdb: 'VARCHAR', convert: (t) => t };
  const array = /^Array\((.*)\)$/.exec(name);
  if (array) {
    const element = columnType(array[1] as string);
    return { duckdb: `${element.duckdb}[]`, convert: (t) => parseArray(t, element), raw: true };
  }
  if (name === 'Nothing') return { duckdb: 'NULL', convert: () => null };
  return { duckdb: name, convert: (t) => t };
}

/** ClickHouse writes an exception into the body when it fails after the rows began (HTTP 200 already sent). */
export const MID_STREAM_ERROR = /^Code: \d+[.,] (?:e\.displayText\(\) = )?DB::Exception/;

export interface TsvReader {
  /** Feeds one complete line (without its newline). */
  line(text: string): void;
  readonly rows: number;
  table(): Table;
  /** the ClickHouse type names of the types line */
  sourceTypes(): readonly string[];
}

export function tsvReader(): TsvReader {
  let names: string[] | null = null;
  let types: ColumnType[] | null = null;
  let rawTypes: string[] = [];
  let columns: Cell[][] = [];
  let rows = 0;
  return {
    line(text) {
      const fields = text.split('\t');
      if (!names) { names = fields.map(unescapeTsv); return; }
      if (!types) {
        rawTypes = fields.map(unescapeTsv);
        types = rawTypes.map(columnType);
        columns = types.map(() => []);
        return;
      }
      if (fields.length !== types.length) throw new EngineError('internal', `ClickHouse sent a row of ${fields.length} fields for ${types.length} columns`);
      fields.forEach((f, j) => {
        const type = (types as ColumnType[])[j] as ColumnType;
        (columns[j] as Cell[]).push(f === '\\N' ? null : type.convert(type.raw ? f : unescapeTsv(f)));
      });
      rows++;
    },
    get rows() { return rows; },
    sourceTypes: () => rawTypes,
    table() {
      if (!names || !types) throw new EngineError('internal', 'ClickHouse sent no column header');
      return { names, types: types.map((t) => t.duckdb), columns, rowCount: rows };
    },
  };
}
