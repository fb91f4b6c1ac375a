/** The one place identifiers and literals are quoted for DuckDB SQL (STYLE.md §1). */

export function ident(name: string): string {
  return `"${name.replaceAll('"', '""')}"`;
}

export function literal(value: string): string {
  return `'${value.replaceAll("'", "''")}'`;
}

/** A finite number as a DOUBLE literal; non-finite input is a programming error. */
export function double(value: number): string {
  if (!Number.isFinite(value)) throw new Error(`cannot write non-finite number ${value} into SQL`);
  return `CAST(${String(value)} AS DOUBLE)`;
}

export function integer(value: number): string {
  if (!Number.isSafeInteger(value)) throw new Error(`not a safe integer: ${value}`);
  return String(value);
}
