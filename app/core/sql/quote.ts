/** The one place identifiers and literals are quoted for DuckDB SQL (STYLE.md §1). */

export function ident(name: string): string {
  return `"${name.replaceAll('"', '""')}"`;
}

/** A NUL inside a literal would end DuckDB's parse of the statement there, so NULs become chr(0). */
export function literal(value: string): string {
  const quoted = `'${value.replaceAll("'", "''")}'`;
  return value.includes('\0') ? `(${quoted.split('\0').join("' || chr(0) || '")})` : quoted;
}

/**
 * A finite number as a DOUBLE literal; non-finite input is a programming error. Written as text cast to
 * DOUBLE: DuckDB reads a bare decimal literal such as 0.19380120266269746 as a DECIMAL first, and its
 * DECIMAL → DOUBLE cast is not correctly rounded (0.19380120266269743), while its text → DOUBLE cast is,
 * so the SQL holds exactly the double written here.
 */
export function double(value: number): string {
  if (!Number.isFinite(value)) throw new Error(`cannot write non-finite number ${value} into SQL`);
  return `CAST('${String(value)}' AS DOUBLE)`;
}

export function integer(value: number): string {
  if (!Number.isSafeInteger(value)) throw new Error(`not a safe integer: ${value}`);
  return String(value);
}

/** A TIMESTAMP literal for microseconds since the Unix epoch (UTC), to the microsecond. */
export function timestamp(us: number): string {
  if (!Number.isSafeInteger(us)) throw new Error(`not a whole number of microseconds: ${us}`);
  const ms = Math.floor(us / 1000);
  // safe integers of microseconds span the years 1684-2255, which toISOString writes as YYYY-MM-DD
  const iso = new Date(ms).toISOString();
  const micro = String(us - ms * 1000).padStart(3, '0');
  return `TIMESTAMP '${iso.slice(0, 10)} ${iso.slice(11, 23)}${micro}'`;
}
