/**
 * The one converter from @duckdb/node-api values to Cells (rules: app/core/table.ts). Used by the native
 * engine and therefore by the engine host. Dispatches on the value's class, so nested values (lists of
 * structs...) recurse through the same function. Types the rules do not name: INTERVAL becomes
 * { months, days, micros }, UNION its member value, anything else (BIT, TIME WITH TIME ZONE, GEOMETRY...)
 * DuckDB's own text.
 */
import {
  DuckDBArrayValue, DuckDBBlobValue, DuckDBDateValue, DuckDBDecimalValue, DuckDBIntervalValue, DuckDBListValue,
  DuckDBMapValue, DuckDBStructValue, DuckDBTimestampMillisecondsValue, DuckDBTimestampNanosecondsValue,
  DuckDBTimestampSecondsValue, DuckDBTimestampTZValue, DuckDBTimestampValue, DuckDBTimeValue, DuckDBUnionValue,
} from '@duckdb/node-api';
import type { DuckDBMaterializedResult, DuckDBResultReader, DuckDBValue } from '@duckdb/node-api';
import type { Cell, Table } from '../../core/table.ts';
import { bytesToHex, floorDiv, formatDate, formatDecimal, formatTime, formatTimestamp } from './format.ts';

function cellFromDuckDB(value: DuckDBValue): Cell {
  if (value === null || value === undefined) return null;
  switch (typeof value) {
    case 'boolean': case 'number': case 'bigint': case 'string': return value;
  }
  if (value instanceof DuckDBDecimalValue) return formatDecimal(value.value, value.scale);
  if (value instanceof DuckDBTimestampValue || value instanceof DuckDBTimestampTZValue) return formatTimestamp(value.micros);
  if (value instanceof DuckDBTimestampSecondsValue) return formatTimestampScaled(value.seconds, 1_000_000n, 1n);
  if (value instanceof DuckDBTimestampMillisecondsValue) return formatTimestampScaled(value.millis, 1000n, 1n);
  if (value instanceof DuckDBTimestampNanosecondsValue) return formatTimestampScaled(value.nanos, 1n, 1000n);
  if (value instanceof DuckDBDateValue) return formatDate(value.days);
  if (value instanceof DuckDBTimeValue) return formatTime(value.micros);
  if (value instanceof DuckDBBlobValue) return bytesToHex(value.bytes);
  if (value instanceof DuckDBListValue || value instanceof DuckDBArrayValue) return value.items.map(cellFromDuckDB);
  if (value instanceof DuckDBStructValue) {
    const out: { [field: string]: Cell } = {};
    for (const [k, v] of Object.entries(value.entries)) out[k] = cellFromDuckDB(v);
    return out;
  }
  if (value instanceof DuckDBMapValue) {
    const out: { [field: string]: Cell } = {};
    for (const { key, value: v } of value.entries) out[String(cellFromDuckDB(key))] = cellFromDuckDB(v);
    return out;
  }
  if (value instanceof DuckDBIntervalValue) return { months: value.months, days: value.days, micros: value.micros };
  if (value instanceof DuckDBUnionValue) return cellFromDuckDB(value.value);
  return String(value);
}

/** ±infinity sentinels pass through unscaled so formatTimestamp recognises them. */
function formatTimestampScaled(raw: bigint, multiply: bigint, divide: bigint): string {
  if (raw === 9_223_372_036_854_775_807n || raw === -9_223_372_036_854_775_807n) return formatTimestamp(raw);
  return formatTimestamp(floorDiv(raw * multiply, divide));
}

/** A materialized result, or a streamed one read as far as it was (a locked engine's capped read). */
export async function tableFromDuckDBResult(result: DuckDBMaterializedResult | DuckDBResultReader): Promise<Table> {
  const names = result.columnNames();
  const types = result.columnTypes().map((t) => t.toString());
  const raw = await result.getColumns();
  const columns = raw.map((col) => col.map(cellFromDuckDB));
  return { names, types, columns, rowCount: 'rowCount' in result ? result.rowCount : result.currentRowCount };
}
