/**
 * A SQL dialect: the few spellings in which the engines the scans run on differ. The scan builders write
 * a portable core (SELECT, WHERE, GROUP BY, ORDER BY, LIMIT, CASE, arithmetic, comparisons, coalesce,
 * UNION ALL) and ask the dialect for everything else, so a new engine is one file implementing this
 * interface (DEVELOPERS.md, "Adding a SQL dialect"). Conditions passed in are portable too: they never
 * rely on how an engine orders NaN (DuckDB orders it above every number, IEEE engines compare it false),
 * so a range test on a value that may be NaN carries its own NOT isNaN guard.
 */
export const DIALECT_NAMES = ['duckdb', 'clickhouse'] as const;
export type DialectName = (typeof DIALECT_NAMES)[number];

export interface Dialect {
  readonly name: DialectName;
  /** A quoted identifier. */
  ident(name: string): string;
  /** A quoted text literal. */
  literal(value: string): string;
  /** A finite number as a double-precision literal. */
  double(value: number): string;
  /** A safe integer literal. */
  integer(value: number): string;
  /** x as a double (numbers and booleans; text that does not parse is an error). */
  toDouble(x: string): string;
  /** text (or a number) as a double, NULL where it does not parse. */
  tryDouble(x: string): string;
  /** any value as text (NULL stays NULL). */
  toText(x: string): string;
  /** NaN test (NULL for NULL). */
  isNaN(x: string): string;
  /** finite test: not NaN and not ±∞ (NULL for NULL). */
  isFinite(x: string): string;
  /** rows where cond holds, as a double. */
  countIf(cond: string): string;
  /** Σx over rows where cond holds, 0 when there are none, as a double, summed in a fixed-error way where the engine has one. */
  sumIf(x: string, cond: string): string;
  /** least / greatest x where cond holds, NULL when there are none. */
  minIf(x: string, cond: string): string;
  maxIf(x: string, cond: string): string;
  /** a 64-bit hash of a text value (equal texts hash equal; used to find duplicate ids without holding them) */
  hash64(x: string): string;
  /** microseconds since the Unix epoch of a date-time value (UTC). */
  epochUs(x: string): string;
  /** microseconds since the Unix epoch of text that reads as a date-time, NULL where it does not. */
  textEpochUs(x: string): string;
  /** ±∞ test (NULL for NULL). */
  isInf(x: string): string;
  /** x as a 64-bit integer (epoch seconds, milliseconds, microseconds). */
  toBigint(x: string): string;
  /** x rounded down (floor already applied) as a 32-bit integer: the cube's time bucket. */
  toInteger(x: string): string;
  /** a column of the given kind as a double, NULL where it holds no number (text that does not parse). */
  numberOf(column: string, kind: 'numeric' | 'text' | 'temporal' | 'boolean' | 'other'): string;
  /** a boolean column as 0/1 doubles. */
  booleanNumber(column: string): string;
  /** rows where cond is false or NULL */
  notTrue(cond: string): string;
  /** a condition that always holds */
  readonly truth: string;
  /** a date-time literal for microseconds since the Unix epoch (UTC), or null when the engine's type cannot hold it exactly */
  timestamp(us: number): string | null;
  /**
   * An order-independent fingerprint of the rows: the sum modulo 2^64 of a 64-bit hash of each row's
   * values (as text; NULL as a marker no text equals), as an exact integer. Hash functions differ between
   * engines, so a fingerprint compares with one from the same dialect only (`fingerprintHash`).
   */
  rowHashSum(values: readonly string[]): string;
  /** the name of the hash `rowHashSum` uses, recorded beside the fingerprint */
  readonly fingerprintHash: string;
}

/** The four quoting functions of a dialect, taken from its quoting module (quote.ts, quote-<name>.ts). */
export type Quoting = Pick<Dialect, 'ident' | 'literal' | 'double' | 'integer'>;
export function quotingOf({ ident, literal, double, integer }: Quoting): Quoting {
  return { ident, literal, double, integer };
}

/** How a dialect writes SQL NULL inside the text the row hash reads: a mark no log value starts with. */
export const nullMark = (quoting: Quoting): string => quoting.literal('\u0001null');
