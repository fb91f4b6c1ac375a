/**
 * The profile: row count, nulls, cardinalities, ranges and parse shares for every column. Role
 * suggestion, validation, segment caps and the time-bucket width all come from it.
 *
 * Two queries (profileLog). The first reads only the log's first PREFIX_ROWS rows and measures
 * everything exactly there. The second reads every row for the figures that must hold for the
 * whole log (rows, nulls, numeric and time ranges, NaN/∞/non-binary/non-integer counts), counts
 * distinct values exactly for the columns the first rows show to be categorical, and screens text
 * for numbers and timestamps only in the columns where some first-row value starts like one. The
 * rest (distinct values of identifier-like columns, parse shares of plain text) keeps the first
 * rows' figures and says so (`distinctBasis`, `parseBasis`): counting 10^7 distinct identifiers
 * or running a text screen over 10^7 names costs more than the rest of the audit together.
 */
import type { Dialect } from '../sql/dialect.ts';
import { duckdb } from '../sql/dialect-duckdb.ts';
import { ident, integer } from '../sql/quote.ts';
import { describeSqlClickHouse, parseDescribeClickHouse, profileSqlClickHouse } from './profile-clickhouse.ts';
import type { RunQuery, Table } from '../table.ts';
import { column } from '../table.ts';

export type ColumnKind = 'numeric' | 'text' | 'temporal' | 'boolean' | 'other';

export interface ColumnInfo {
  readonly name: string;
  readonly type: string;
}

export interface ColumnProfile extends ColumnInfo {
  readonly kind: ColumnKind;
  readonly nonNull: number;
  /** Distinct non-null values among the `distinctRows` rows counted (exact there). */
  readonly distinct: number;
  /** 'all rows': counted over the whole log; 'first rows': over its first `distinctRows` rows only, a lower bound. */
  readonly distinctBasis: CountBasis;
  readonly distinctRows: number;
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
  /**
   * text only: 'first rows' when no value among the first rows starts like a number or a timestamp,
   * so the column was not screened further and its parse counts (all 0) describe those rows only.
   */
  readonly parseBasis?: CountBasis;
  /** temporal (or text parsed as time): range in microseconds since the Unix epoch */
  readonly minTimeUs: number | null;
  readonly maxTimeUs: number | null;
}

export type CountBasis = 'all rows' | 'first rows';

export interface Profile {
  readonly rows: number;
  readonly columns: readonly ColumnProfile[];
}

/** Rows the first profile query reads. */
export const PREFIX_ROWS = 100_000;
/** Distinct values among the first rows up to which a column is counted exactly over the whole log (segments.cap allows 10,000). */
export const EXACT_DISTINCT_MAX = 10_000;

/** How the whole-log query measures one column. */
export interface ColumnPlan {
  /** counted per distinct value: every figure exact and cheap, for a column of few values; otherwise row by row, without a distinct count */
  readonly byValue: boolean;
  /** row by row, text only: screen for numbers and timestamps (by value, text is always screened) */
  readonly screen: boolean;
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
const derived = (j: number, what: 'd' | 't' | 'g' | 'k') => ident(`cw:${what}${j}`);
const COUNT = ident('cw:n');

/** Every figure for every column, exactly, from value counts: the first-rows query, and a complete profile of a small log. */
export const FULL_PLAN: ColumnPlan = { byValue: true, screen: true };

/**
 * How one column's aggregates read: row by row (`count(*) FILTER (...)`), or over its value counts
 * (`sum(n) FILTER (...)`).
 */
interface Reader {
  count(cond: string): string;
  nonNull(x: string): string;
  min(x: string, cond?: string): string;
  max(x: string, cond?: string): string;
}

const rowReader: Reader = {
  count: (cond) => `count(*) FILTER (WHERE ${cond})`,
  nonNull: (x) => `count(${x})`,
  min: (x, cond) => `min(${x})${cond ? ` FILTER (WHERE ${cond})` : ''}`,
  max: (x, cond) => `max(${x})${cond ? ` FILTER (WHERE ${cond})` : ''}`,
};

/** Over one column's rows of the value counts: each row a distinct value and its count `cw:n`. */
const valueReader: Reader = {
  count: (cond) => `coalesce(sum(${COUNT}) FILTER (WHERE ${cond}), 0)`,
  nonNull: (x) => `coalesce(sum(${COUNT}) FILTER (WHERE ${x} IS NOT NULL), 0)`,
  min: rowReader.min,
  max: rowReader.max,
};

/** One column's aggregates and the per-row (or per-value) expressions they read. */
function columnParts(c: ColumnInfo, j: number, plan: ColumnPlan, read: Reader): { inner: string[]; screens: string[]; parts: string[] } {
  const col = ident(c.name);
  const kind = columnKind(c.type);
  const inner = [col];
  const screens: string[] = [];
  const d = derived(j, 'd');
  const t = derived(j, 't');
  const parts = [`${read.nonNull(col)}::DOUBLE AS "c${j}_nn"`];
  // over value counts, each row is one value: counting the non-null ones counts the distinct values
  if (kind !== 'other' && plan.byValue) parts.push(`count(${col})::DOUBLE AS "c${j}_nd"`);
  if (kind === 'numeric') {
    inner.push(`CAST(${col} AS DOUBLE) AS ${d}`);
    parts.push(
      `${read.min(d, `NOT isnan(${d})`)} AS "c${j}_min"`,
      `${read.max(d, `NOT isnan(${d})`)} AS "c${j}_max"`,
      `${read.count(`isnan(${d})`)}::DOUBLE AS "c${j}_nan"`,
      `${read.count(`isinf(${d})`)}::DOUBLE AS "c${j}_inf"`,
      `${read.count(`${d} <> 0 AND ${d} <> 1`)}::DOUBLE AS "c${j}_nb"`,
      `${read.count(`isfinite(${d}) AND ${d} <> floor(${d})`)}::DOUBLE AS "c${j}_ni"`,
    );
  } else if (kind === 'text' && (plan.byValue || plan.screen)) {
    const g = derived(j, 'g');
    screens.push(`${mayParse(col)} AS ${g}`);
    inner.push(g, `CASE WHEN ${g} THEN TRY_CAST(${col} AS DOUBLE) END AS ${d}`, `CASE WHEN ${g} THEN TRY_CAST(${col} AS TIMESTAMP) END AS ${t}`);
    parts.push(
      `${read.count(`${d} IS NOT NULL`)}::DOUBLE AS "c${j}_pn"`,
      `${read.count(`${t} IS NOT NULL`)}::DOUBLE AS "c${j}_pt"`,
      `${read.count(`${d} IS NULL AND contains(${col}, ',') AND ${g}`)}::DOUBLE AS "c${j}_pc"`,
      `${read.count(g)}::DOUBLE AS "c${j}_sc"`,
      `${read.min(`epoch_us(${t})`)}::DOUBLE AS "c${j}_tmin"`,
      `${read.max(`epoch_us(${t})`)}::DOUBLE AS "c${j}_tmax"`,
      `${read.min(d, `NOT isnan(${d})`)} AS "c${j}_min"`,
      `${read.max(d, `NOT isnan(${d})`)} AS "c${j}_max"`,
    );
  } else if (kind === 'temporal' && read === rowReader && !/TIME ZONE|TIMESTAMPTZ/i.test(c.type)) {
    // CAST to TIMESTAMP is monotone for DATE and every TIMESTAMP precision, so it commutes with min and max;
    // taken after the aggregate, DuckDB can answer min and max from a Parquet file's statistics
    parts.push(`epoch_us(CAST(min(${col}) AS TIMESTAMP))::DOUBLE AS "c${j}_tmin"`, `epoch_us(CAST(max(${col}) AS TIMESTAMP))::DOUBLE AS "c${j}_tmax"`);
  } else if (kind === 'temporal') {
    inner.push(`${timeUs(col, kind)} AS ${t}`);
    parts.push(`${read.min(t)}::DOUBLE AS "c${j}_tmin"`, `${read.max(t)}::DOUBLE AS "c${j}_tmax"`);
  } else if (kind === 'boolean') {
    parts.push(`${read.min(`CAST(${col} AS INTEGER)`)}::DOUBLE AS "c${j}_min"`, `${read.max(`CAST(${col} AS INTEGER)`)}::DOUBLE AS "c${j}_max"`);
  }
  return { inner, screens, parts };
}

/** SELECT parts FROM (SELECT inner FROM (SELECT *, screens FROM source)): each derived value computed once a row. */
function aggregateOver(source: string, parts: readonly string[], inner: readonly string[], screens: readonly string[]): string {
  const screened = screens.length ? `(SELECT *, ${screens.join(', ')} FROM ${source}) AS ${ident('cw:screened')}` : source;
  const from = inner.length ? `(SELECT ${inner.join(', ')} FROM ${screened}) AS ${ident('cw:rows')}` : source;
  return `SELECT\n  ${parts.join(',\n  ')}\nFROM ${from}`;
}

/**
 * One statement over `relation` (a relation name or a parenthesised subquery). Columns planned
 * `byValue` are counted once per distinct value in one GROUPING SETS aggregate and every figure
 * follows from those counts, exactly (a figure over rows is a sum of value counts); text screens then
 * run once per value, not per row. The other columns are read row by row, without a distinct count,
 * screening text only where their plan asks. `c{j}_sc` counts the text values passing mayParse.
 */
export function profileSql(relation: string, columns: readonly ColumnInfo[], plans: readonly ColumnPlan[] = columns.map(() => FULL_PLAN)): string {
  const rows = { parts: ['count(*)::DOUBLE AS "rows"'], inner: [] as string[], screens: [] as string[] };
  const perValue: string[] = [];
  const grouped: { col: string; mark: string }[] = [];
  const values = ident('cw:values');
  columns.forEach((c, j) => {
    const plan = plans[j] ?? FULL_PLAN;
    if (!plan.byValue) {
      const part = columnParts(c, j, plan, rowReader);
      rows.parts.push(...part.parts);
      rows.inner.push(...part.inner);
      rows.screens.push(...part.screens);
      return;
    }
    const mark = derived(j, 'k');
    grouped.push({ col: ident(c.name), mark });
    const part = columnParts(c, j, plan, valueReader);
    const own = `(SELECT ${[ident(c.name), COUNT].join(', ')} FROM ${values} WHERE ${mark} = 0)`;
    perValue.push(`(${aggregateOver(own, part.parts, [...part.inner, COUNT], part.screens)}) AS ${ident(`cw:c${j}`)}`);
  });
  const rowQuery = aggregateOver(relation, rows.parts, rows.inner, rows.screens);
  if (grouped.length === 0) return rowQuery;
  const marks = grouped.map((g) => `GROUPING(${g.col}) AS ${g.mark}`);
  return [
    `WITH ${values} AS MATERIALIZED (SELECT ${[...marks, ...grouped.map((g) => g.col)].join(', ')}, count(*) AS ${COUNT} FROM ${relation} GROUP BY GROUPING SETS (${grouped.map((g) => `(${g.col})`).join(', ')}))`,
    `SELECT * FROM\n(${rowQuery}) AS ${ident('cw:by-row')},\n${perValue.join(',\n')}`,
  ].join('\n');
}

function num(table: Table, name: string): number | null {
  const j = table.names.indexOf(name);
  if (j < 0) return null;
  const v = (table.columns[j] as readonly unknown[])[0];
  if (v === null || v === undefined) return null;
  return typeof v === 'bigint' ? Number(v) : Number(v);
}

/** A profile from one profileSql result; every figure counted over all the rows that query read. */
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
        distinctBasis: 'all rows' as const,
        distinctRows: rows,
        min: get('min'),
        max: get('max'),
        nan: get('nan') ?? 0,
        infinite: get('inf') ?? 0,
        nonBinary: get('nb') ?? 0,
        nonInteger: get('ni') ?? 0,
        parsedAsNumber: kind === 'numeric' ? get('nn') ?? 0 : get('pn') ?? 0,
        parsedAsTime: kind === 'temporal' ? get('nn') ?? 0 : get('pt') ?? 0,
        ...(kind === 'text' ? { decimalComma: get('pc') ?? 0, parseBasis: 'all rows' as const } : {}),
        minTimeUs: get('tmin'),
        maxTimeUs: get('tmax'),
      };
    }),
  };
}

/** Text values of each column that pass mayParse, from a profileSql result (0 for other kinds). */
function screenedCounts(table: Table, columns: readonly ColumnInfo[]): number[] {
  return columns.map((_, j) => num(table, `c${j}_sc`) ?? 0);
}

function prefixSql(relation: string, rows = PREFIX_ROWS): string {
  return `(SELECT * FROM ${relation} LIMIT ${integer(rows)})`;
}

/** What the whole-log query must measure, given the first rows' profile and screen counts. */
function planFromPrefix(prefix: Profile, screened: readonly number[]): ColumnPlan[] {
  return prefix.columns.map((c, j) => ({
    byValue: c.kind !== 'other' && c.distinct <= EXACT_DISTINCT_MAX && c.distinct <= Math.max(1, 0.5 * c.nonNull),
    screen: c.kind === 'text' && (screened[j] ?? 0) > 0,
  }));
}

/** The whole-log figures, with the first rows' figures where the plan skipped a measurement. */
function mergeProfiles(prefix: Profile, whole: Profile, plans: readonly ColumnPlan[]): Profile {
  return {
    rows: whole.rows,
    columns: whole.columns.map((c, j) => {
      const plan = plans[j] ?? FULL_PLAN;
      const first = prefix.columns[j] as ColumnProfile;
      const distinct = plan.byValue
        ? { distinct: c.distinct, distinctBasis: 'all rows' as const, distinctRows: whole.rows }
        : { distinct: first.distinct, distinctBasis: 'first rows' as const, distinctRows: prefix.rows };
      if (c.kind !== 'text' || plan.byValue || plan.screen) return { ...c, ...distinct };
      // unscreened text has no parse counts or parsed ranges (all 0 and null): they describe the first rows
      return { ...c, ...distinct, parseBasis: 'first rows' as const };
    }),
  };
}

/**
 * The profile of a registered log in at most two queries (see the head of this file): DESCRIBE, the
 * first PREFIX_ROWS rows, and, when the log is longer, every row. `record` names each query.
 */
export async function profileLog(run: RunQuery, relation: string, record: (name: string, sql: string, scans: boolean) => string = (_n, sql) => sql, d: Dialect = duckdb): Promise<Profile> {
  const ch = d.name === 'clickhouse';
  const profileSql_ = ch ? profileSqlClickHouse : profileSql;
  const columns = ch ? parseDescribeClickHouse(await run(record('describe', describeSqlClickHouse(relation), false))) : parseDescribe(await run(record('describe', describeSql(relation), false)));
  const firstTable = await run(record('profile (first rows)', profileSql_(prefixSql(relation), columns), true));
  const prefix = parseProfile(firstTable, columns);
  if (prefix.rows < PREFIX_ROWS) return prefix;
  const plans = planFromPrefix(prefix, screenedCounts(firstTable, columns));
  return mergeProfiles(prefix, parseProfile(await run(record('profile', profileSql_(relation, columns, plans), true)), columns), plans);
}
