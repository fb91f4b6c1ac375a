/**
 * Row drill-down: the rows behind one segment-map cell (segment values and an action) or one finding
 * (its predicate), read page by page in one deterministic order.
 *
 * Order: the time column, then the decision id, then a hash of the whole row. A file's own row order is
 * not something every reader exposes (CSV has no row number, and a view over several files has none), so
 * the hash breaks ties instead: rows that tie on every key are identical in every column, and which of two
 * identical rows comes first cannot be seen. Without a time or id role the hash alone orders the rows.
 *
 * Paging: the page after a fetched page starts from that page's last key (keyset), so a deep page costs
 * a filtered scan and a short top-n instead of sorting every earlier row; rows tied with that key that
 * were already shown are skipped with a small OFFSET. A page reached without its predecessor (a jump to
 * the end of the scroll bar) uses LIMIT/OFFSET.
 */
import { ident, integer, literal } from '../sql/quote.ts';
import type { Cell, Table } from '../table.ts';
import { NULL_LABEL, OTHER_LABEL } from './expressions.ts';

export const DRILL_PAGE_ROWS = 200;

/** Result column holding each row's hash, the last order key; a log column never has this name. */
export const ROW_HASH = 'cw:row_hash';
/** Result column holding a text time column parsed as a timestamp, when the time column is text. */
const ROW_TIME = 'cw:row_time';

export interface DrillRoles {
  readonly time: string | null;
  readonly decision_id: string | null;
  readonly action: string | null;
}

export interface DrillSelection {
  /** Segment column -> value as the cube labels it (nulls "(null)", a capped column's rest "(other)"). */
  readonly segment: Readonly<Record<string, string>>;
  readonly action?: string | null;
  /** A finding's predicate over the log's own columns. */
  readonly where?: string;
  /** For each capped segment column, the values the cube kept: "(other)" selects every value not among them. */
  readonly kept?: Readonly<Record<string, readonly string[]>>;
}

export interface DrillSpec {
  /** Quoted relation name of the registered source. */
  readonly relation: string;
  readonly roles: DrillRoles;
  readonly selection: DrillSelection;
  /** DuckDB types of the log's columns (from the profile); a text time column is then ordered as a timestamp. */
  readonly columnTypes?: Readonly<Record<string, string>>;
}

/** Where the next page starts: the order-key values of the last row shown, and how many shown rows share them. */
export interface DrillCursor {
  readonly key: readonly Cell[];
  readonly types: readonly string[];
  readonly tied: number;
}

export interface PageRequest {
  readonly offset: number;
  readonly limit: number;
  /** The cursor after the page ending at `offset`; without it the page is read with OFFSET. */
  readonly after?: DrillCursor | null;
}

interface OrderKey {
  /** SQL over the cell's rows */
  readonly expr: string;
  /** the result column carrying its value */
  readonly output: string;
  /** a plain log column, so a range filter on it can reach the reader's statistics */
  readonly plain: boolean;
}

/** The alias the log's rows carry inside the query; `hash(alias)` hashes the whole row as a struct. */
const ROW = ident('cw:row');
const INNER = ident('cw:cell');

function isText(type: string | undefined): boolean {
  return type !== undefined && /^(VARCHAR|TEXT|STRING)$/i.test(type.trim());
}

/** What the order depends on: the roles and the column types. */
export type DrillOrderSpec = Pick<DrillSpec, 'roles' | 'columnTypes'>;

function orderKeys(spec: DrillOrderSpec): OrderKey[] {
  const keys: OrderKey[] = [];
  const { time, decision_id: id } = spec.roles;
  if (time) {
    keys.push(isText(spec.columnTypes?.[time])
      ? { expr: ident(ROW_TIME), output: ROW_TIME, plain: false }
      : { expr: ident(time), output: time, plain: true });
  }
  if (id && id !== time) keys.push({ expr: ident(id), output: id, plain: true });
  keys.push({ expr: ident(ROW_HASH), output: ROW_HASH, plain: false });
  return keys;
}

/** Matches the cube's reading of a segment or action column: its text, with null read as "(null)". */
function valueMatch(column: string, value: string, kept: readonly string[] | undefined): string {
  const text = `CAST(${ident(column)} AS VARCHAR)`;
  if (value === OTHER_LABEL && kept) {
    return kept.length ? `coalesce(${text}, ${literal(NULL_LABEL)}) NOT IN (${kept.map(literal).join(', ')})` : 'TRUE';
  }
  if (value === NULL_LABEL) return `(${ident(column)} IS NULL OR ${text} = ${literal(NULL_LABEL)})`;
  return `${text} = ${literal(value)}`;
}

/** The selection's predicate over the log's own columns. */
function drillWhere(spec: DrillSpec): string {
  const { segment, action, where, kept } = spec.selection;
  const parts = Object.entries(segment).map(([c, v]) => valueMatch(c, v, kept?.[c]));
  if (action !== undefined && action !== null) {
    if (!spec.roles.action) throw new Error('cannot select an action\'s rows: no column is mapped to the action role');
    parts.push(valueMatch(spec.roles.action, action, kept?.[spec.roles.action]));
  }
  if (where !== undefined && where.trim() !== '') parts.push(`(${where})`);
  return parts.length ? parts.join('\n  AND ') : 'TRUE';
}

function cellRows(spec: DrillSpec): string {
  const time = spec.roles.time;
  const parsed = time && isText(spec.columnTypes?.[time]) ? `, TRY_CAST(${ident(time)} AS TIMESTAMP) AS ${ident(ROW_TIME)}` : '';
  return `SELECT *${parsed}, hash(${ROW}) AS ${ident(ROW_HASH)}\n  FROM ${spec.relation} AS ${ROW}\n  WHERE ${drillWhere(spec)}`;
}

function orderBy(keys: readonly OrderKey[]): string {
  return `ORDER BY ${keys.map((k) => `${k.expr} ASC NULLS LAST`).join(', ')}`;
}

/** Every row of the selection in drill order: what the pages add up to, and the SQL shown to the reader. */
export function drillSql(spec: DrillSpec): string {
  return `SELECT * FROM (\n  ${cellRows(spec)}\n) AS ${INNER}\n${orderBy(orderKeys(spec))}`;
}

export function drillCountSql(spec: DrillSpec): string {
  return `SELECT count(*)::DOUBLE AS ${ident('rows')} FROM ${spec.relation} AS ${ROW}\nWHERE ${drillWhere(spec)}`;
}

export function parseDrillCount(t: Table): number {
  const v = t.columns[0]?.[0];
  const n = Number(v ?? Number.NaN);
  if (!Number.isFinite(n)) throw new Error('the row count query returned no number');
  return n;
}

/**
 * A key value written back into SQL as a value of its own type, so that comparing the key column with
 * it orders exactly as ORDER BY does; null when the value cannot be written exactly (nanosecond
 * timestamps, time zones, nested values), and the page falls back to OFFSET.
 */
export function keyLiteral(value: Cell, type: string): string | null {
  const t = type.trim().toUpperCase();
  if (value === null) return 'NULL';
  if (/^(U?(TINYINT|SMALLINT|INTEGER|BIGINT|HUGEINT)|UHUGEINT)$/.test(t)) {
    if (typeof value === 'bigint' || (typeof value === 'number' && Number.isInteger(value))) return `CAST(${value.toString()} AS ${t})`;
    return null;
  }
  if (t === 'DOUBLE' || t === 'FLOAT') {
    if (typeof value !== 'number') return null;
    // String(x) is the shortest decimal that reads back as the same double (ECMA-262 Number::toString).
    const text = Number.isNaN(value) ? "'NaN'" : value === Infinity ? "'Infinity'" : value === -Infinity ? "'-Infinity'" : String(value);
    return `CAST(${text} AS ${t})`;
  }
  if (t === 'BOOLEAN') return typeof value === 'boolean' ? (value ? 'TRUE' : 'FALSE') : null;
  if (typeof value !== 'string') return null;
  if (t === 'VARCHAR') return literal(value);
  if (t === 'DATE' || t === 'UUID' || /^DECIMAL\(\d+,\d+\)$/.test(t)) return `CAST(${literal(value)} AS ${t})`;
  if (t === 'TIMESTAMP' || t === 'TIMESTAMP_S' || t === 'TIMESTAMP_MS') {
    const m = /^(\d{4,}-\d\d-\d\d)T(\d\d:\d\d:\d\d(?:\.\d{1,6})?)Z$/.exec(value);
    return m ? `CAST(${literal(`${m[1]} ${m[2]}`)} AS ${t})` : null;
  }
  return null;
}

/** Rows at or after the cursor's key in drill order (ascending, nulls last). */
function atOrAfter(keys: readonly OrderKey[], literals: readonly string[]): string {
  let clause = 'TRUE';
  for (let i = keys.length - 1; i >= 0; i--) {
    const k = (keys[i] as OrderKey).expr;
    const v = literals[i] as string;
    const [greater, equal] = v === 'NULL' ? ['FALSE', `${k} IS NULL`] : [`(${k} > ${v} OR ${k} IS NULL)`, `${k} = ${v}`];
    clause = clause === 'TRUE' ? `(${greater} OR ${equal})` : `(${greater} OR (${equal} AND ${clause}))`;
  }
  return clause;
}

function keysetLiterals(keys: readonly OrderKey[], cursor: DrillCursor): string[] | null {
  if (cursor.key.length !== keys.length || cursor.types.length !== keys.length) return null;
  const out: string[] = [];
  for (let i = 0; i < keys.length; i++) {
    const lit = keyLiteral(cursor.key[i] ?? null, cursor.types[i] ?? '');
    if (lit === null) return null;
    out.push(lit);
  }
  return out;
}

/** One page of the selection in drill order. */
export function drillPageSql(spec: DrillSpec, request: PageRequest): string {
  const keys = orderKeys(spec);
  const limit = integer(Math.max(0, request.limit));
  const literals = request.after ? keysetLiterals(keys, request.after) : null;
  if (!request.after || !literals) {
    return `${drillSql(spec)}\nLIMIT ${limit} OFFSET ${integer(Math.max(0, request.offset))}`;
  }
  const filters = [atOrAfter(keys, literals)];
  // The same bound on the first key alone, as a plain range the reader can check against its statistics.
  const first = keys[0] as OrderKey;
  if (first.plain && keys.length > 1) filters.unshift(literals[0] === 'NULL' ? `${first.expr} IS NULL` : `(${first.expr} >= ${literals[0]} OR ${first.expr} IS NULL)`);
  return [
    `SELECT * FROM (\n  ${cellRows(spec)}\n) AS ${INNER}`,
    `WHERE ${filters.join('\n  AND ')}`,
    orderBy(keys),
    `LIMIT ${limit} OFFSET ${integer(request.after.tied)}`,
  ].join('\n');
}

function sameCell(a: Cell, b: Cell): boolean {
  if (a === b) return true;
  if (typeof a === 'number' && typeof b === 'number') return Number.isNaN(a) && Number.isNaN(b);
  if (a === null || b === null || typeof a !== 'object' || typeof b !== 'object') return false;
  const ea = Object.entries(a);
  const eb = Object.entries(b);
  return ea.length === eb.length && ea.every(([k, v], i) => eb[i]?.[0] === k && sameCell(v, eb[i][1]));
}

/** Result columns holding the order keys, first to last. */
export function drillOrderColumns(spec: DrillOrderSpec): string[] {
  return orderKeys(spec).map((k) => k.output);
}

/**
 * The cursor after a fetched page: its last row's order keys (the `drillOrderColumns` of the page) and
 * how many rows up to and including it share them. `before` is the cursor the page was read from; a page
 * read with OFFSET at offset > 0 whose every row ties cannot tell how many tied rows precede it, so it
 * gives no cursor.
 */
export function cursorAfter(orderColumns: readonly string[], page: Table, before: DrillCursor | null, offset: number): DrillCursor | null {
  if (page.rowCount === 0) return null;
  const idx = orderColumns.map((k) => page.names.indexOf(k));
  if (idx.some((j) => j < 0)) return null;
  const at = (row: number) => idx.map((j) => (page.columns[j] as readonly Cell[])[row] ?? null);
  const last = page.rowCount - 1;
  const key = at(last);
  let tied = 1;
  while (tied <= last && at(last - tied).every((v, i) => sameCell(v, key[i] ?? null))) tied++;
  if (tied === page.rowCount) {
    if (before && before.key.every((v, i) => sameCell(v, key[i] ?? null))) tied += before.tied;
    else if (!before && offset > 0) return null;
  }
  return { key, types: idx.map((j) => page.types[j] ?? ''), tied };
}

/** What the SQL a report shows calls the log (finding SQL and a segment-map cell's SQL alike): the reader names their own table or view `log`. */
export const LOG_NAME = 'log';
const findingSqlPrefix = (relation: string) => `SELECT * FROM ${relation} WHERE `;

/** A finding's re-runnable SQL (report findings' `sql`): every row of the log its predicate selects. */
export function findingSql(where: string): string {
  return `${findingSqlPrefix(LOG_NAME)}${where}`;
}

/**
 * The predicate back from findingSql's text; null for SQL of any other shape. Reports written before the
 * SQL named the log `log` name the engine's relation instead, which is accepted too.
 */
export function findingWhere(sql: string | undefined, relation: string): string | null {
  for (const prefix of [findingSqlPrefix(LOG_NAME), findingSqlPrefix(relation)]) {
    if (sql !== undefined && sql.startsWith(prefix) && sql.length > prefix.length) return sql.slice(prefix.length);
  }
  return null;
}

/**
 * A segment-map cell's rows as SQL for a reader to re-run against the log (called `log` here): the segment's
 * values and the action, each column compared with its value as written.
 */
export function cellReaderSql(actionColumn: string, segment: Readonly<Record<string, string>>, action: string): string {
  const where = [...Object.entries(segment).map(([k, v]) => `${ident(k)} = ${literal(v)}`), `${ident(actionColumn)} = ${literal(action)}`];
  return `SELECT *\nFROM ${LOG_NAME}\nWHERE ${where.join('\n  AND ')}`;
}
