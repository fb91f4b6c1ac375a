/**
 * Prepares the input of the hand-written baseline: the Parquet log rewritten once as an Arrow IPC file
 * (record batches of 122,880 rows, the generator's row-group size), because apache-arrow in JavaScript
 * cannot read Parquet. DuckDB reads the Parquet and apache-arrow writes the batches; this step is
 * preparation, like generating the log, and is not part of any timing.
 */
import { createWriteStream } from 'node:fs';
import { rename, stat } from 'node:fs/promises';
import { DuckDBInstance } from '@duckdb/node-api';
import { Field, Float64, Int32, RecordBatch, RecordBatchFileWriter, Schema, Struct, TimestampMicrosecond, Utf8, makeData } from 'apache-arrow';
import type { Data, DataType } from 'apache-arrow';

const BATCH_ROWS = 122_880;
const SLICE_ROWS = 20 * BATCH_ROWS;

/** Column name, SQL read from the Parquet, Arrow type. Timestamps travel as epoch microseconds. */
const COLUMNS: readonly [string, string, () => DataType][] = [
  ['decision_id', 'decision_id', () => new Utf8()],
  ['logged_at', 'epoch_us(logged_at)', () => new TimestampMicrosecond()],
  ['region', 'region', () => new Utf8()],
  ['device', 'device', () => new Utf8()],
  ['tenure', 'tenure', () => new Utf8()],
  ['promotion', 'promotion', () => new Utf8()],
  ['propensity', 'propensity', () => new Float64()],
  ['ordered', 'ordered', () => new Int32()],
  ['basket_value', 'basket_value', () => new Float64()],
  ['policy_version', 'policy_version', () => new Utf8()],
];

/** Validity bitmap (LSB first, Arrow columnar format §"Validity bitmaps"), or undefined when nothing is null. */
function validity(values: readonly unknown[]): { nullBitmap: Uint8Array | undefined; nullCount: number } {
  let nullCount = 0;
  const bitmap = new Uint8Array((values.length + 7) >> 3);
  values.forEach((v, i) => {
    if (v === null) nullCount++;
    else bitmap[i >> 3]! |= 1 << (i & 7);
  });
  return { nullBitmap: nullCount ? bitmap : undefined, nullCount };
}

/** Arrow's generic builders cost microseconds a value; these write the buffers directly. */
function columnData(type: DataType, values: readonly unknown[]): Data {
  const length = values.length;
  const { nullBitmap, nullCount } = validity(values);
  if (type instanceof Utf8) {
    const encoder = new TextEncoder();
    const valueOffsets = new Int32Array(length + 1);
    let bytes = new Uint8Array(length * 16);
    let at = 0;
    values.forEach((v, i) => {
      if (v !== null) {
        const text = String(v);
        if (at + text.length * 3 > bytes.length) {
          const grown = new Uint8Array(Math.max(bytes.length * 2, at + text.length * 3));
          grown.set(bytes);
          bytes = grown;
        }
        at += encoder.encodeInto(text, bytes.subarray(at)).written;
      }
      valueOffsets[i + 1] = at;
    });
    return makeData({ type, length, nullCount, nullBitmap, valueOffsets, data: bytes.subarray(0, at) });
  }
  if (type instanceof TimestampMicrosecond) {
    const data = new BigInt64Array(length);
    values.forEach((v, i) => { data[i] = v === null ? 0n : BigInt(v as bigint); });
    return makeData({ type, length, nullCount, nullBitmap, data });
  }
  if (type instanceof Int32) {
    const data = new Int32Array(length);
    values.forEach((v, i) => { data[i] = v === null ? 0 : Number(v); });
    return makeData({ type, length, nullCount, nullBitmap, data });
  }
  const data = new Float64Array(length);
  values.forEach((v, i) => { data[i] = v === null ? 0 : Number(v); });
  return makeData({ type: type as Float64, length, nullCount, nullBitmap, data });
}

export async function exists(path: string): Promise<boolean> {
  return stat(path).then(() => true, () => false);
}

export async function writeArrowCopy(parquetPath: string, arrowPath: string): Promise<void> {
  if (await exists(arrowPath)) return;
  const instance = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false', threads: '2' });
  const connection = await instance.connect();
  const schema = new Schema(COLUMNS.map(([name, , type]) => new Field(name, type(), true)));
  const partial = `${arrowPath}.partial`;
  const out = createWriteStream(partial);
  const writer = RecordBatchFileWriter.throughNode();
  writer.pipe(out);
  const done = new Promise<void>((resolve, reject) => { out.once('finish', () => resolve()); out.once('error', reject); });
  const source = `read_parquet('${parquetPath.replaceAll("'", "''")}')`;
  const total = Number((await (await connection.run(`SELECT count(*) FROM ${source}`)).getRows())[0]![0]);
  let pending: unknown[][] = COLUMNS.map(() => []);
  const flush = () => {
    const rows = pending[0]!.length;
    if (rows === 0) return;
    const children = COLUMNS.map(([, , type], j) => columnData(type(), pending[j]!));
    const data = makeData({ type: new Struct(schema.fields), length: rows, nullCount: 0, children });
    writer.write(new RecordBatch(schema, data));
    pending = COLUMNS.map(() => []);
  };
  // Materialized slices: a streaming result hands over one 2,048-row chunk per round trip, which is far slower.
  for (let offset = 0; offset < total; offset += SLICE_ROWS) {
    const result = await connection.run(`SELECT ${COLUMNS.map(([name, sql]) => `${sql} AS "${name}"`).join(', ')} FROM ${source} LIMIT ${SLICE_ROWS} OFFSET ${offset}`);
    for (let c = 0; c < result.chunkCount; c++) {
      const chunk = result.getChunk(c);
      for (let j = 0; j < COLUMNS.length; j++) {
        const target = pending[j]!;
        for (const v of chunk.getColumnValues(j)) target.push(v);
      }
      if (pending[0]!.length >= BATCH_ROWS) flush();
    }
  }
  flush();
  writer.end();
  await done;
  connection.closeSync();
  instance.closeSync();
  await rename(partial, arrowPath);
}
