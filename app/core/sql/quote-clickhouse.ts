/**
 * The one place identifiers and literals are quoted for ClickHouse SQL (STYLE.md §1). ClickHouse reads
 * backslash escapes inside both quote kinds (ClickHouse documentation, "Syntax": identifiers, string
 * literals), so a backslash is doubled before the quote is escaped.
 */

export function ident(name: string): string {
  return `\`${name.replaceAll('\\', '\\\\').replaceAll('`', '\\`')}\``;
}

/** A NUL is written as \0, which ClickHouse reads inside a literal. */
export function literal(value: string): string {
  return `'${value.replaceAll('\\', '\\\\').replaceAll("'", "\\'").replaceAll('\0', '\\0')}'`;
}

/**
 * A finite number as a Float64 literal; non-finite input is a programming error. 18.16's parser refuses
 * subnormal numbers and numbers past about 1e308 as literals (test/engine/clickhouse.test.ts), so those are refused here.
 */
export function double(value: number): string {
  if (!Number.isFinite(value)) throw new Error(`cannot write non-finite number ${value} into SQL`);
  if (value !== 0 && (Math.abs(value) < 2.2250738585072014e-308 || Math.abs(value) > 1e308)) throw new Error(`cannot write ${value} as a ClickHouse literal (outside the normal range 18.16 parses)`);
  return `toFloat64(${String(value)})`;
}

export function integer(value: number): string {
  if (!Number.isSafeInteger(value)) throw new Error(`not a safe integer: ${value}`);
  return String(value);
}
