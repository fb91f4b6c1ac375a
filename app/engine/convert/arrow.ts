/**
 * The one converter from Arrow record batches to Cells (rules: app/core/table.ts), used by both DuckDB-Wasm
 * adapters. They hand over the raw IPC bytes DuckDB-Wasm produces, decoded here with this project's
 * apache-arrow, so a single Arrow version is ever inspected. Temporal and decimal values are read from the
 * raw buffers (Arrow's own getters round timestamps to float milliseconds). Same choices as the native
 * converter for types the rules do not name: INTERVAL -> { months, days, micros }.
 * Known difference from native: DuckDB-Wasm exports HUGEINT as Decimal(38,0), so it arrives as a DECIMAL
 * string; ENUM and UUID arrive as VARCHAR, and DuckDB-Wasm's streamed results drop ENUM dictionaries.
 */
import { DateUnit, IntervalUnit, TimeUnit, Type, Vector, tableFromIPC } from 'apache-arrow';
import type { Data, DataType, Field, Table as ArrowTable } from 'apache-arrow';
import type { Cell, Table } from '../../core/table.ts';
import { EngineError } from '../types.ts';
import { bytesToHex, floorDiv, formatDate, formatDecimal, formatTime, formatTimestamp } from './format.ts';

type AnyData = Data<DataType>;

const INT64_INFINITY = 9_223_372_036_854_775_807n;

function int64At(values: ArrayLike<number | bigint>, i: number): bigint {
  if (values instanceof BigInt64Array || values instanceof BigUint64Array) return values[i] as bigint;
  const words = values as Int32Array;
  return (BigInt(words[2 * i + 1] as number) << 32n) | BigInt((words[2 * i] as number) >>> 0);
}

/** Little-endian two's complement of `width` 32-bit words. */
function wideIntAt(words: Uint32Array, i: number, width: number): bigint {
  let v = 0n;
  for (let k = width - 1; k >= 0; k--) v = (v << 32n) | BigInt(words[i * width + k] as number);
  const bits = BigInt(width * 32);
  return v >= 1n << (bits - 1n) ? v - (1n << bits) : v;
}

function unitToMicros(raw: bigint, unit: TimeUnit): bigint {
  if (raw === INT64_INFINITY || raw === -INT64_INFINITY) return raw;
  switch (unit) {
    case TimeUnit.SECOND: return raw * 1_000_000n;
    case TimeUnit.MILLISECOND: return raw * 1000n;
    case TimeUnit.MICROSECOND: return raw;
    default: return floorDiv(raw, 1000n);
  }
}

function mapRows(data: AnyData, at: (i: number) => Cell): Cell[] {
  const out: Cell[] = new Array(data.length);
  for (let i = 0; i < data.length; i++) out[i] = data.getValid(i) ? at(i) : null;
  return out;
}

function listRows(data: AnyData, child: Cell[], start: (i: number) => number, end: (i: number) => number): Cell[] {
  return mapRows(data, (i) => child.slice(start(i), end(i)));
}

function cellsFromArrowData(data: AnyData): Cell[] {
  const type = data.type as DataType;
  const values = data.values as unknown as ArrayLike<number | bigint>;
  switch (type.typeId) {
    case Type.Null: return new Array<Cell>(data.length).fill(null);
    case Type.Int: {
      const wide = (type as unknown as { bitWidth: number }).bitWidth === 64;
      return mapRows(data, wide ? (i) => int64At(values, i) : (i) => values[i] as number);
    }
    case Type.Float: {
      if ((type as unknown as { precision: number }).precision === 0) {
        const vector = new Vector([data]);
        return mapRows(data, (i) => vector.get(i) as number);
      }
      return mapRows(data, (i) => values[i] as number);
    }
    case Type.Decimal: {
      const { scale, bitWidth } = type as unknown as { scale: number; bitWidth: number };
      const words = data.values as unknown as Uint32Array;
      return mapRows(data, (i) => formatDecimal(wideIntAt(words, i, bitWidth / 32), scale));
    }
    case Type.Date: {
      const unit = (type as unknown as { unit: DateUnit }).unit;
      if (unit === DateUnit.DAY) return mapRows(data, (i) => formatDate(values[i] as number));
      return mapRows(data, (i) => formatDate(Number(floorDiv(int64At(values, i), 86_400_000n))));
    }
    case Type.Time: {
      const { unit, bitWidth } = type as unknown as { unit: TimeUnit; bitWidth: number };
      const raw = bitWidth === 64 ? (i: number) => int64At(values, i) : (i: number) => BigInt(values[i] as number);
      return mapRows(data, (i) => formatTime(unitToMicros(raw(i), unit)));
    }
    case Type.Timestamp: {
      const unit = (type as unknown as { unit: TimeUnit }).unit;
      return mapRows(data, (i) => formatTimestamp(unitToMicros(int64At(values, i), unit)));
    }
    case Type.Interval: {
      const unit = (type as unknown as { unit: IntervalUnit }).unit;
      const words = data.values as unknown as Int32Array;
      if (unit === IntervalUnit.MONTH_DAY_NANO) {
        return mapRows(data, (i) => ({
          months: words[4 * i] as number, days: words[4 * i + 1] as number,
          micros: floorDiv((BigInt(words[4 * i + 3] as number) << 32n) | BigInt((words[4 * i + 2] as number) >>> 0), 1000n),
        }));
      }
      if (unit === IntervalUnit.DAY_TIME) {
        return mapRows(data, (i) => ({ months: 0, days: words[2 * i] as number, micros: BigInt(words[2 * i + 1] as number) * 1000n }));
      }
      return mapRows(data, (i) => ({ months: words[i] as number, days: 0, micros: 0n }));
    }
    case Type.Binary: case Type.LargeBinary: case Type.FixedSizeBinary: case Type.BinaryView: {
      const vector = new Vector([data]);
      return mapRows(data, (i) => bytesToHex(vector.get(i) as Uint8Array));
    }
    case Type.List: case Type.LargeList: {
      const child = cellsFromArrowData(data.children[0] as AnyData);
      const offsets = data.valueOffsets as unknown as ArrayLike<number | bigint>;
      const base = Number(offsets[0] ?? 0);
      return listRows(data, child, (i) => Number(offsets[i]) - base, (i) => Number(offsets[i + 1]) - base);
    }
    case Type.FixedSizeList: {
      const size = (type as unknown as { listSize: number }).listSize;
      const child = cellsFromArrowData(data.children[0] as AnyData);
      return listRows(data, child, (i) => i * size, (i) => (i + 1) * size);
    }
    case Type.Struct: {
      const fields = (type as unknown as { children: Field[] }).children;
      const children = data.children.map((c) => cellsFromArrowData(c as AnyData));
      return mapRows(data, (i) => {
        const row: { [field: string]: Cell } = {};
        fields.forEach((f, k) => { row[f.name] = (children[k] as Cell[])[i] ?? null; });
        return row;
      });
    }
    case Type.Map: {
      const entries = data.children[0] as AnyData;
      const keys = cellsFromArrowData(entries.children[0] as AnyData);
      const vals = cellsFromArrowData(entries.children[1] as AnyData);
      const offsets = data.valueOffsets as unknown as ArrayLike<number>;
      const base = Number(offsets[0] ?? 0);
      return mapRows(data, (i) => {
        const row: { [field: string]: Cell } = {};
        for (let k = Number(offsets[i]) - base; k < Number(offsets[i + 1]) - base; k++) row[String(keys[k])] = vals[k] ?? null;
        return row;
      });
    }
    case Type.Dictionary: {
      const dictionary = (data.dictionary as Vector | undefined)?.data.flatMap((d) => cellsFromArrowData(d as AnyData)) ?? [];
      return mapRows(data, (i) => {
        const index = Number(values[i]);
        // DuckDB-Wasm 1.32 streams ENUM columns without their dictionary batch; never guess the values.
        if (index >= dictionary.length) throw new EngineError('internal', 'DuckDB-Wasm returned an ENUM column without its values; cast the column to VARCHAR in the query.');
        return dictionary[index] ?? null;
      });
    }
    default: {
      // Bool, Utf8, LargeUtf8, Utf8View: Arrow's getters are exact for these.
      const vector = new Vector([data]);
      const plain = type.typeId === Type.Bool || type.typeId === Type.Utf8 || type.typeId === Type.LargeUtf8 || type.typeId === Type.Utf8View;
      return mapRows(data, (i) => (plain ? (vector.get(i) as Cell) : String(vector.get(i))));
    }
  }
}

/** DuckDB's spelling of the logical type an Arrow type came from (inverse of DuckDB's Arrow export). */
function duckdbTypeName(type: DataType): string {
  const t = type as unknown as Record<string, unknown>;
  switch (type.typeId) {
    case Type.Null: return 'NULL';
    case Type.Bool: return 'BOOLEAN';
    case Type.Int: {
      const names: Record<number, [string, string]> = { 8: ['TINYINT', 'UTINYINT'], 16: ['SMALLINT', 'USMALLINT'], 32: ['INTEGER', 'UINTEGER'], 64: ['BIGINT', 'UBIGINT'] };
      const pair = names[t.bitWidth as number] ?? ['BIGINT', 'UBIGINT'];
      return t.isSigned ? pair[0] : pair[1];
    }
    case Type.Float: return (['FLOAT', 'FLOAT', 'DOUBLE'] as const)[t.precision as number] ?? 'DOUBLE';
    case Type.Decimal: return `DECIMAL(${t.precision as number},${t.scale as number})`;
    case Type.Date: return 'DATE';
    case Type.Time: return 'TIME';
    case Type.Timestamp: {
      if (t.timezone) return 'TIMESTAMP WITH TIME ZONE';
      return (['TIMESTAMP_S', 'TIMESTAMP_MS', 'TIMESTAMP', 'TIMESTAMP_NS'] as const)[t.unit as TimeUnit] ?? 'TIMESTAMP';
    }
    case Type.Interval: return 'INTERVAL';
    case Type.Utf8: case Type.LargeUtf8: case Type.Utf8View: return 'VARCHAR';
    case Type.Binary: case Type.LargeBinary: case Type.FixedSizeBinary: case Type.BinaryView: return 'BLOB';
    case Type.List: case Type.LargeList: return `${duckdbTypeName((t.children as Field[])[0]!.type)}[]`;
    case Type.FixedSizeList: return `${duckdbTypeName((t.children as Field[])[0]!.type)}[${t.listSize as number}]`;
    case Type.Struct: return `STRUCT(${(t.children as Field[]).map((f) => `"${f.name.replaceAll('"', '""')}" ${duckdbTypeName(f.type)}`).join(', ')})`;
    case Type.Map: {
      const entry = (t.children as Field[])[0]!.type as unknown as { children: Field[] };
      return `MAP(${duckdbTypeName(entry.children[0]!.type)}, ${duckdbTypeName(entry.children[1]!.type)})`;
    }
    case Type.Dictionary: return duckdbTypeName(t.dictionary as DataType);
    default: return String(type);
  }
}

function tableFromArrow(arrow: ArrowTable): Table {
  const fields = arrow.schema.fields;
  const columns = fields.map((_, j) => {
    const vector = arrow.getChildAt(j);
    return vector ? vector.data.flatMap((d) => cellsFromArrowData(d as AnyData)) : [];
  });
  return { names: fields.map((f) => f.name), types: fields.map((f) => duckdbTypeName(f.type)), columns, rowCount: arrow.numRows };
}

/** DuckDB-Wasm answers with an Arrow IPC stream split into messages (schema first, then batches). */
export function tableFromIpcChunks(chunks: readonly Uint8Array[]): Table {
  let size = 0;
  for (const c of chunks) size += c.byteLength;
  const bytes = new Uint8Array(size);
  let at = 0;
  for (const c of chunks) { bytes.set(c, at); at += c.byteLength; }
  return tableFromArrow(tableFromIPC(bytes));
}
