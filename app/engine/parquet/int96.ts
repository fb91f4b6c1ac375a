/**
 * INT96 timestamps (the legacy Impala/Hive encoding: nanoseconds within the day, then the Julian day).
 * arrow-rs reads them into 64-bit nanoseconds, which wrap outside 1677–2262, and DuckDB's cast from
 * TIMESTAMP_NS to TIMESTAMP does not round as DuckDB's own Parquet reader does (it floors to the
 * microsecond). So these columns are read apart, by hyparquet, as exact nanoseconds (BigInt) and floored to
 * microseconds here: the values native DuckDB's read_parquet gives (test/engine/parquet-load.test.ts).
 */
import { makeData, makeVector, TimestampMicrosecond } from 'apache-arrow';
import type { Vector } from 'apache-arrow';
import { parquetRead } from 'hyparquet';
import type { FileMetaData } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';
import { blobBuffer } from './footer.ts';

/** Floor division of nanoseconds to microseconds (BigInt division truncates toward zero). */
export function floorMicros(ns: bigint): bigint {
  const q = ns / 1000n;
  return ns % 1000n < 0n ? q - 1n : q;
}

/** One INT96 column of one row group as an Arrow TIMESTAMP (µs) vector. */
export async function readInt96Column(blob: Blob, footer: FileMetaData, rowGroup: number, column: string): Promise<Vector> {
  let rowStart = 0;
  for (let g = 0; g < rowGroup; g++) rowStart += Number(footer.row_groups[g]?.num_rows ?? 0);
  const rows = Number(footer.row_groups[rowGroup]?.num_rows ?? 0);
  const values = await new Promise<unknown[][]>((resolve, reject) => {
    parquetRead({
      file: blobBuffer(blob), metadata: footer, columns: [column], rowStart, rowEnd: rowStart + rows, compressors,
      parsers: { timestampFromNanoseconds: (ns: bigint) => ns },
      onComplete: resolve,
    }).catch(reject);
  });
  const micros = new BigInt64Array(rows);
  const valid = new Uint8Array(Math.ceil(rows / 8));
  let nulls = 0;
  for (let i = 0; i < rows; i++) {
    const v = values[i]?.[0];
    if (typeof v === 'bigint') {
      micros[i] = floorMicros(v);
      valid[i >> 3] = (valid[i >> 3] ?? 0) | (1 << (i & 7));
    } else nulls++;
  }
  return makeVector(makeData({ type: new TimestampMicrosecond(), length: rows, nullCount: nulls, nullBitmap: nulls ? valid : null, data: micros }));
}
