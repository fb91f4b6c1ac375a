/**
 * The plain, engine-neutral result of a query: what every engine adapter returns and the only shape
 * statistics code ever sees (STYLE.md §2). Adapters convert engine values once, by these rules:
 *
 *   BOOLEAN                              -> boolean
 *   TINYINT..INTEGER, U*, FLOAT, DOUBLE  -> number (NaN, +Infinity, -Infinity preserved)
 *   BIGINT, UBIGINT, HUGEINT, UHUGEINT   -> bigint (exact)
 *   DECIMAL(w,s)                         -> string, plain decimal notation with exactly s fraction digits ("-12.50")
 *   DATE                                 -> string "YYYY-MM-DD"
 *   TIME                                 -> string "HH:MM:SS[.ffffff]"
 *   TIMESTAMP[_S|_MS|_NS], TIMESTAMPTZ   -> string ISO-8601 UTC with microseconds "YYYY-MM-DDTHH:MM:SS.ffffffZ"
 *   VARCHAR, ENUM, UUID                  -> string
 *   BLOB                                 -> string, lowercase hex
 *   LIST / ARRAY                         -> Cell[]
 *   STRUCT / MAP                         -> { [field]: Cell }
 *   NULL                                 -> null
 * Core SQL that needs arithmetic on such values casts in SQL (e.g. count(*)::DOUBLE, epoch_ms(t)).
 */
export type Cell = null | boolean | number | bigint | string | Cell[] | { [field: string]: Cell };

export interface Table {
  /** Column names in result order. */
  readonly names: readonly string[];
  /** DuckDB logical type names as DuckDB prints them, e.g. "BIGINT", "DECIMAL(10,2)", "TIMESTAMP". */
  readonly types: readonly string[];
  /** Column-major values: columns[j][i] is row i of column j. */
  readonly columns: readonly (readonly Cell[])[];
  readonly rowCount: number;
}

/** Runs one SQL statement and returns its result; the only thing app/core needs from an engine. */
export type RunQuery = (sql: string) => Promise<Table>;

export function column(table: Table, name: string): readonly Cell[] {
  const j = table.names.indexOf(name);
  if (j < 0) throw new Error(`result has no column "${name}" (has ${table.names.join(', ')})`);
  return table.columns[j] as readonly Cell[];
}

export function rowObjects(table: Table): Record<string, Cell>[] {
  const out: Record<string, Cell>[] = [];
  for (let i = 0; i < table.rowCount; i++) {
    const row: Record<string, Cell> = {};
    table.names.forEach((n, j) => { row[n] = (table.columns[j] as readonly Cell[])[i] ?? null; });
    out.push(row);
  }
  return out;
}
