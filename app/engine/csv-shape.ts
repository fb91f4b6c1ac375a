/**
 * Ragged CSV rows. When a file's rows disagree in their number of fields, DuckDB's CSV sniffer finds no
 * dialect that fits and silently reads every line as ONE text column (named after the whole header line).
 * Auditing that would report "no action column"; instead the user is told which lines are ragged.
 */
import type { Table } from '../core/table.ts';
import { quoteIdentifier, quoteLiteral } from './sql-source.ts';
import { EngineError } from './types.ts';

const DELIMITERS = [',', ';', '\t', '|'] as const;

export interface CollapsedHeader {
  readonly column: string;
  readonly delimiter: string;
  readonly fields: number;
}

/** The one-column fallback: a single VARCHAR column whose name splits into several fields. */
export function collapsedHeader(describe: Table): CollapsedHeader | null {
  const names = describe.columns[describe.names.indexOf('column_name')] ?? [];
  const types = describe.columns[describe.names.indexOf('column_type')] ?? [];
  if (names.length !== 1 || types[0] !== 'VARCHAR') return null;
  const column = String(names[0]);
  const counts = DELIMITERS.map((d) => [d, column.split(d).length] as const).sort((a, b) => b[1] - a[1]);
  const [delimiter, fields] = counts[0] as readonly [string, number];
  return fields >= 2 ? { column, delimiter, fields } : null;
}

/** First lines (1-based, the header is line 1) whose field count differs from the header's; quotes are ignored. */
export function raggedLinesSql(relation: string, shape: CollapsedHeader, limit = 3): string {
  const fields = `len(string_split(${quoteIdentifier(shape.column)}, ${quoteLiteral(shape.delimiter)}))`;
  return `SELECT line::DOUBLE AS line, fields::DOUBLE AS fields, total::DOUBLE AS total FROM (
  SELECT row_number() OVER () + 1 AS line, ${fields} AS fields, count(*) FILTER (WHERE ${fields} <> ${shape.fields}) OVER () AS total FROM ${relation}
) WHERE fields <> ${shape.fields} ORDER BY line LIMIT ${limit}`;
}

export function raggedRowsError(file: string | undefined, shape: CollapsedHeader, lines: Table): EngineError {
  const at = (name: string) => lines.columns[lines.names.indexOf(name)] ?? [];
  const rows = at('line').map((line, i) => `line ${Number(line)} has ${Number(at('fields')[i])}`);
  const total = Number(at('total')[0] ?? 0);
  const where = file ? `"${file}"` : 'the log';
  const sep = shape.delimiter === '\t' ? 'tab' : `'${shape.delimiter}'`;
  const detail = rows.length
    ? `${rows.join(', ')} ${sep}-separated fields where the header has ${shape.fields}${total > rows.length ? ` (${total} such lines in all)` : ''}`
    : `its lines do not split into the header's ${shape.fields} ${sep}-separated fields`;
  return new EngineError('io', `Cannot read ${where}: the rows do not all have the same number of fields: ${detail}. Fix or remove those rows (a file cut short ends in a partial row).`);
}
