/**
 * What a Parquet footer says about the columns, for loading a file into DuckDB-Wasm through Arrow: the
 * top-level columns, the type native DuckDB's read_parquet gives each (so the loaded table answers with the
 * same types), codecs and types the decoder cannot read (named by column), and an estimate of the memory
 * the columns take once loaded. Logical and converted types: Apache Parquet LogicalTypes.md.
 */
import type { FileMetaData, SchemaElement } from 'hyparquet';

export interface ParquetColumn {
  readonly name: string;
  readonly element: SchemaElement;
  /** Indexes of the leaf columns (column chunks) under this column. */
  readonly leaves: readonly number[];
  /** The type native DuckDB reads it as, or null when it leaves the Arrow type's mapping alone (nested). */
  readonly duckdbType: string | null;
}

export function topLevelColumns(metadata: FileMetaData): ParquetColumn[] {
  const schema = metadata.schema;
  const columns: ParquetColumn[] = [];
  let at = 1;
  let leaf = 0;
  const root = schema[0]?.num_children ?? 0;
  for (let c = 0; c < root; c++) {
    const element = schema[at] as SchemaElement;
    // Walk the subtree: an element with children is a group; each element without is one leaf.
    const first = leaf;
    let pending = 1;
    while (pending > 0) {
      const e = schema[at++] as SchemaElement;
      pending--;
      if (e.num_children) pending += e.num_children;
      else leaf++;
    }
    const leaves = Array.from({ length: leaf - first }, (_, k) => first + k);
    columns.push({ name: element.name, element, leaves, duckdbType: element.num_children ? null : duckdbTypeOf(element) });
  }
  return columns;
}

/** The type DuckDB 1.x's Parquet reader gives a primitive column (its defaults: binary_as_string off). */
export function duckdbTypeOf(e: SchemaElement): string | null {
  const logical = e.logical_type;
  const converted = e.converted_type;
  if (logical?.type === 'DECIMAL' || converted === 'DECIMAL') {
    const precision = logical?.type === 'DECIMAL' ? logical.precision : e.precision ?? 18;
    const scale = logical?.type === 'DECIMAL' ? logical.scale : e.scale ?? 0;
    return precision > 38 ? 'DOUBLE' : `DECIMAL(${precision},${scale})`;
  }
  switch (e.type) {
    case 'BOOLEAN': return 'BOOLEAN';
    // INT96 is read as a plain TIMESTAMP (DuckDB's parquet reader: "always a timestamp it would seem").
    case 'INT96': return 'TIMESTAMP';
    case 'FLOAT': return 'FLOAT';
    case 'DOUBLE': return 'DOUBLE';
    case 'INT32': {
      if (logical?.type === 'DATE' || converted === 'DATE') return 'DATE';
      if (logical?.type === 'TIME' || converted === 'TIME_MILLIS') return 'TIME';
      return integerType(e, 32);
    }
    case 'INT64': {
      if (logical?.type === 'TIMESTAMP') {
        if (logical.unit === 'NANOS') return logical.isAdjustedToUTC ? 'TIMESTAMP WITH TIME ZONE' : 'TIMESTAMP_NS';
        return logical.isAdjustedToUTC ? 'TIMESTAMP WITH TIME ZONE' : 'TIMESTAMP';
      }
      if (converted === 'TIMESTAMP_MILLIS' || converted === 'TIMESTAMP_MICROS') return 'TIMESTAMP';
      if (logical?.type === 'TIME' || converted === 'TIME_MICROS') return 'TIME';
      return integerType(e, 64);
    }
    case 'BYTE_ARRAY':
      if (logical?.type === 'STRING' || logical?.type === 'ENUM' || logical?.type === 'JSON' || converted === 'UTF8' || converted === 'ENUM' || converted === 'JSON') return 'VARCHAR';
      return 'BLOB';
    case 'FIXED_LEN_BYTE_ARRAY':
      if (logical?.type === 'UUID') return 'UUID';
      return 'BLOB';
    default: return null;
  }
}

function integerType(e: SchemaElement, physical: 32 | 64): string {
  const logical = e.logical_type;
  const bits = logical?.type === 'INTEGER' ? logical.bitWidth : ({ INT_8: 8, UINT_8: 8, INT_16: 16, UINT_16: 16, INT_32: 32, UINT_32: 32, INT_64: 64, UINT_64: 64 } as Record<string, number>)[e.converted_type ?? ''] ?? physical;
  const unsigned = logical?.type === 'INTEGER' ? !logical.isSigned : (e.converted_type ?? '').startsWith('UINT');
  const name = ({ 8: 'TINYINT', 16: 'SMALLINT', 32: 'INTEGER', 64: 'BIGINT' } as Record<number, string>)[bits] ?? (physical === 32 ? 'INTEGER' : 'BIGINT');
  return unsigned ? `U${name}` : name;
}

/** Codecs the decoder (parquet-wasm 0.8.0, full build) reads: bench/NOTES.md, "Parquet in DuckDB-Wasm". */
const READABLE_CODECS: ReadonlySet<string> = new Set(['UNCOMPRESSED', 'SNAPPY', 'GZIP', 'BROTLI', 'ZSTD', 'LZ4', 'LZ4_RAW']);

/** A column the in-browser reader cannot decode, with the reason in words; null when every column reads. */
export function unreadableColumn(metadata: FileMetaData, columns: readonly ParquetColumn[]): { column: string; why: string } | null {
  for (const column of columns) {
    for (const group of metadata.row_groups) {
      for (const leaf of column.leaves) {
        const codec = group.columns[leaf]?.meta_data?.codec;
        if (codec && !READABLE_CODECS.has(codec)) return { column: column.name, why: `it is compressed with ${codec}, which the in-browser Parquet reader cannot decompress (it reads ${[...READABLE_CODECS].join(', ').toLowerCase()})` };
      }
    }
    const e = column.element;
    if (e.converted_type === 'INTERVAL' || e.logical_type?.type === 'INTERVAL') return { column: column.name, why: 'it holds Parquet INTERVAL values, which the in-browser Parquet reader cannot decode' };
    if (e.logical_type?.type === 'FLOAT16') return { column: column.name, why: 'it holds 16-bit floats, which DuckDB-Wasm cannot take from Arrow' };
  }
  return null;
}

const FIXED_BYTES: Record<string, number> = { BOOLEAN: 1, INT32: 4, FLOAT: 4, INT64: 8, DOUBLE: 8, INT96: 8 };

/**
 * Bytes the columns take in DuckDB's memory once loaded, estimated from the footer: fixed-width values at
 * their width; each string a 16-byte entry plus its bytes, the bytes taken from the chunk's uncompressed
 * size (an under-estimate for long strings stored as a dictionary). Plus a validity bit per value.
 */
export function loadedBytes(metadata: FileMetaData, columns: readonly ParquetColumn[]): number {
  let bytes = 0;
  for (const group of metadata.row_groups) {
    for (const column of columns) {
      for (const leaf of column.leaves) {
        const meta = group.columns[leaf]?.meta_data;
        if (!meta) continue;
        const values = Number(meta.num_values);
        const width = FIXED_BYTES[meta.type];
        bytes += width !== undefined ? values * width : values * 16 + Number(meta.total_uncompressed_size);
        bytes += values / 8;
      }
    }
  }
  return bytes;
}

/** key=value folder names in a part's path (hive partitioning), in path order. */
export function hiveValues(path: string): [string, string][] {
  const dirs = path.split(/[\\/]/).slice(0, -1);
  const out: [string, string][] = [];
  for (const d of dirs) {
    const m = /^([^=]+)=(.*)$/.exec(d);
    if (m) out.push([m[1] as string, decodeURIComponent(m[2] as string)]);
  }
  return out;
}
