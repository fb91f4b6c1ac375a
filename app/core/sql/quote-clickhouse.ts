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

/** A finite number as a Float64 literal; non-finite input is a programming error. */
export function double(value: number): string {
  if (!Number.isFinite(value)) throw new Error(`cannot write non-finite number ${value} into SQL`);
  return `toFloat64(${String(value)})`;
}

export function integer(value: number): string {
  if (!Number.isSafeInteger(value)) throw new Error(`not a safe integer: ${value}`);
  return String(value);
}
