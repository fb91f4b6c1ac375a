/**
 * The profile pass: one scan giving row count, nulls, approximate cardinalities, ranges and parse
 * shares for every column. Role suggestion, validation, segment caps and the time-bucket width
 * all come from it.
 */
import { ident } from '../sql/quote.ts';
import type { Table } from '../table.ts';
import { column } from '../table.ts';

export type ColumnKind = 'numeric' | 'text' | 'temporal' | 'boolean' | 'other';

export interface ColumnInfo {
  readonly name: string;
  readonly type: string;
}

export interface ColumnProfile extends ColumnInfo {
  readonly kind: ColumnKind;
  readonly nonNull: number;
  /** approx_count_distinct (HyperLogLog): approximate by design. */
  readonly distinct: number;
  readonly min: number | null;
  readonly max: number | null;
  /** numeric only: NaN count, ±Infinity count, values other than 0 and 1, non-integer values */
  readonly nan: number;
  readonly infinite: number;
  readonly nonBinary: number;
  readonly nonInteger: number;
  /** text only: values that parse as a number / as a timestamp */
  readonly parsedAsNumber: number;
  readonly parsedAsTime: number;
  /** text only: values that start like a number and hold a comma but do not parse (a decimal comma, "0,25") */
  readonly decimalComma?: number;
  /** temporal (or text parsed as time): range in microseconds since the Unix epoch */
  readonly minTimeUs: number | null;
  readonly maxTimeUs: number | null;
}

export interface Profile {
  readonly rows: number;
  readonly columns: readonly ColumnProfile[];
}

const NUMERIC = /^(TINYINT|SMALLINT|INTEGER|BIGINT|HUGEINT|UTINYINT|USMALLINT|UINTEGER|UBIGINT|UHUGEINT|FLOAT|DOUBLE|REAL|DECIMAL(\(\d+,\s*\d+\))?)$/;
const TEMPORAL = /^(DATE|TIMESTAMP(_S|_MS|_NS)?|TIMESTAMP WITH TIME ZONE|TIMESTAMPTZ)$/;

export function columnKind(type: string): ColumnKind {
  const t = type.toUpperCase();
  if (NUMERIC.test(t)) return 'numeric';
  if (TEMPORAL.test(t)) return 'temporal';
  if (t === 'VARCHAR' || t.startsWith('ENUM') || t === 'UUID') return 'text';
  if (t === 'BOOLEAN') return 'boolean';
  return 'other';
}

export function describeSql(relation: string): string {
  return `DESCRIBE SELECT * FROM ${relation}`;
}

export function parseDescribe(table: Table): ColumnInfo[] {
  const names = column(table, 'column_name');
  const types = column(table, 'column_type');
  return names.map((n, i) => ({ name: String(n), type: String(types[i]) }));
}

/*
 * A failed TRY_CAST from text costs DuckDB about a microsecond a row (it builds an error message), so
 * text that cannot parse is screened out first by its start: a cheap necessary condition, checked
 * against DuckDB's own casts in test/bench/profile-guards.test.ts. After the leading ASCII whitespace
 * DuckDB skips, a TIMESTAMP starts with a digit or '-', or is infinity/epoch (any case, 'inf' included);
 * a DOUBLE starts with a digit, '+', '-' or '.', or is inf/infinity/nan (any case). Every byte below ':'
 * passes (whitespace, signs, '.', digits). One anchored regular expression is cheaper per row than
 * the equivalent comparisons, on dictionary-encoded and plain strings alike.
 */
export function mayParse(col: string): string {
  return `regexp_matches(${col}, '^(?:[\\x00-9]|[iI][nN][fF]|[nN][aA][nN]|[eE][pP][oO][cC][hH])')`;
}

function timeUs(expr: string, kind: ColumnKind): string {
  return kind === 'temporal' ? `epoch_us(CAST(${expr} AS TIMESTAMP))` : `epoch_us(TRY_CAST(${expr} AS TIMESTAMP))`;
}

/** Per-row values the aggregates share, computed once in an inner projection (aliases cannot clash with a log's names). */
const derived = (j: number, what: 'd' | 't' | 'g') => ident(`cw:${what}${j}`);

export function profileSql(relation: string, columns: readonly ColumnInfo[]): string {
  const parts: string[] = ['count(*)::DOUBLE AS "rows"'];
  const inner: string[] = [];
  const screens: string[] = [];
  columns.forEach((c, j) => {
    const col = ident(c.name);
    const kind = columnKind(c.type);
    inner.push(col);
    parts.push(`count(${col})::DOUBLE AS "c${j}_nn"`);
    if (kind !== 'other') parts.push(`approx_count_distinct(${col})::DOUBLE AS "c${j}_nd"`);
    const d = derived(j, 'd');
    const t = derived(j, 't');
    if (kind === 'numeric') {
      inner.push(`CAST(${col} AS DOUBLE) AS ${d}`);
      parts.push(
        `min(${d}) FILTER (WHERE NOT isnan(${d})) AS "c${j}_min"`,
        `max(${d}) FILTER (WHERE NOT isnan(${d})) AS "c${j}_max"`,
        `count(*) FILTER (WHERE isnan(${d}))::DOUBLE AS "c${j}_nan"`,
        `count(*) FILTER (WHERE isinf(${d}))::DOUBLE AS "c${j}_inf"`,
        `count(*) FILTER (WHERE ${d} <> 0 AND ${d} <> 1)::DOUBLE AS "c${j}_nb"`,
        `count(*) FILTER (WHERE isfinite(${d}) AND ${d} <> floor(${d}))::DOUBLE AS "c${j}_ni"`,
      );
    } else if (kind === 'text') {
      const g = derived(j, 'g');
      screens.push(`${mayParse(col)} AS ${g}`);
      inner.push(g, `CASE WHEN ${g} THEN TRY_CAST(${col} AS DOUBLE) END AS ${d}`, `CASE WHEN ${g} THEN TRY_CAST(${col} AS TIMESTAMP) END AS ${t}`);
      parts.push(
        `count(${d})::DOUBLE AS "c${j}_pn"`,
        `count(${t})::DOUBLE AS "c${j}_pt"`,
        `count(*) FILTER (WHERE ${d} IS NULL AND contains(${col}, ',') AND ${g})::DOUBLE AS "c${j}_pc"`,
        `min(epoch_us(${t}))::DOUBLE AS "c${j}_tmin"`,
        `max(epoch_us(${t}))::DOUBLE AS "c${j}_tmax"`,
        `min(${d}) FILTER (WHERE NOT isnan(${d})) AS "c${j}_min"`,
        `max(${d}) FILTER (WHERE NOT isnan(${d})) AS "c${j}_max"`,
      );
    } else if (kind === 'temporal') {
      inner.push(`${timeUs(col, kind)} AS ${t}`);
      parts.push(`min(${t})::DOUBLE AS "c${j}_tmin"`, `max(${t})::DOUBLE AS "c${j}_tmax"`);
    } else if (kind === 'boolean') {
      parts.push(`min(CAST(${col} AS INTEGER))::DOUBLE AS "c${j}_min"`, `max(CAST(${col} AS INTEGER))::DOUBLE AS "c${j}_max"`);
    }
  });
  const screened = screens.length ? `(SELECT *, ${screens.join(', ')} FROM ${relation}) AS ${ident('cw:screened')}` : relation;
  const from = inner.length ? `(SELECT ${inner.join(', ')} FROM ${screened}) AS ${ident('cw:rows')}` : relation;
  return `SELECT\n  ${parts.join(',\n  ')}\nFROM ${from}`;
}

function num(table: Table, name: string): number | null {
  const j = table.names.indexOf(name);
  if (j < 0) return null;
  const v = (table.columns[j] as readonly unknown[])[0];
  if (v === null || v === undefined) return null;
  return typeof v === 'bigint' ? Number(v) : Number(v);
}

export function parseProfile(table: Table, columns: readonly ColumnInfo[]): Profile {
  const rows = num(table, 'rows') ?? 0;
  return {
    rows,
    columns: columns.map((c, j) => {
      const kind = columnKind(c.type);
      const get = (s: string) => num(table, `c${j}_${s}`);
      return {
        name: c.name,
        type: c.type,
        kind,
        nonNull: get('nn') ?? 0,
        distinct: get('nd') ?? 0,
        min: get('min'),
        max: get('max'),
        nan: get('nan') ?? 0,
        infinite: get('inf') ?? 0,
        nonBinary: get('nb') ?? 0,
        nonInteger: get('ni') ?? 0,
        parsedAsNumber: kind === 'numeric' ? get('nn') ?? 0 : get('pn') ?? 0,
        parsedAsTime: kind === 'temporal' ? get('nn') ?? 0 : get('pt') ?? 0,
        ...(kind === 'text' ? { decimalComma: get('pc') ?? 0 } : {}),
        minTimeUs: get('tmin'),
        maxTimeUs: get('tmax'),
      };
    }),
  };
}
