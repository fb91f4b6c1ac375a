/**
 * Writes a small Parquet file with INT96 timestamps, for tests: no writer installed here emits INT96 (native
 * DuckDB writes INT64 timestamps), so this one is written by hand from the format's definition. Layout and
 * structures: Apache Parquet format, README "File Format" and parquet.thrift (FileMetaData, SchemaElement,
 * RowGroup, ColumnChunk, ColumnMetaData, PageHeader, DataPageHeader); encoded with the Thrift compact
 * protocol (Apache Thrift, doc/specs/thrift-compact-protocol.md). One row group, one PLAIN-encoded,
 * uncompressed V1 data page per column; nulls as definition levels in the RLE/bit-packed hybrid encoding
 * (Parquet format, Encodings.md). An INT96 timestamp is 8 bytes of nanoseconds within the day followed by
 * 4 bytes of Julian day number, both little-endian (the Impala/Hive convention DuckDB's and arrow-rs's
 * readers follow); the Unix epoch is Julian day 2,440,588.
 */

const enum T { I32 = 5, I64 = 6, BINARY = 8, LIST = 9, STRUCT = 12 }

class Compact {
  readonly out: number[] = [];
  private last: number[] = [0];
  varint(v: bigint): void {
    let x = v;
    do {
      let b = Number(x & 0x7fn);
      x >>= 7n;
      if (x > 0n) b |= 0x80;
      this.out.push(b);
    } while (x > 0n);
  }
  zigzag(v: bigint): void { this.varint(v >= 0n ? v << 1n : ((-v) << 1n) - 1n); }
  field(id: number, type: T): void {
    const delta = id - (this.last[this.last.length - 1] ?? 0);
    if (delta > 0 && delta <= 15) this.out.push((delta << 4) | type);
    else { this.out.push(type); this.zigzag(BigInt(id)); }
    this.last[this.last.length - 1] = id;
  }
  i32(id: number, v: number): void { this.field(id, T.I32); this.zigzag(BigInt(v)); }
  i64(id: number, v: number | bigint): void { this.field(id, T.I64); this.zigzag(BigInt(v)); }
  binary(id: number, text: string): void { this.field(id, T.BINARY); this.bytes(text); }
  bytes(text: string): void { const b = new TextEncoder().encode(text); this.varint(BigInt(b.length)); this.out.push(...b); }
  list(id: number, type: T, size: number): void {
    this.field(id, T.LIST);
    if (size < 15) this.out.push((size << 4) | type);
    else { this.out.push(0xf0 | type); this.varint(BigInt(size)); }
  }
  struct(id: number | null, body: () => void): void {
    if (id !== null) this.field(id, T.STRUCT);
    this.last.push(0);
    body();
    this.out.push(0);
    this.last.pop();
  }
}

export interface Int96Column {
  readonly name: string;
  /** Nanoseconds since the Unix epoch, or null. */
  readonly values: readonly (bigint | null)[];
}

const NS_PER_DAY = 86_400_000_000_000n;
const EPOCH_JULIAN_DAY = 2_440_588n;

function int96(ns: bigint): number[] {
  let day = ns / NS_PER_DAY;
  let within = ns % NS_PER_DAY;
  if (within < 0n) { within += NS_PER_DAY; day -= 1n; }
  const b = new DataView(new ArrayBuffer(12));
  b.setBigInt64(0, within, true);
  b.setInt32(8, Number(day + EPOCH_JULIAN_DAY), true);
  return [...new Uint8Array(b.buffer)];
}

/** Definition levels (bit width 1) as one bit-packed run, preceded by its 4-byte length (data page V1). */
function definitionLevels(present: readonly boolean[]): number[] {
  const groups = Math.ceil(present.length / 8);
  const run: number[] = [];
  const header = new Compact();
  header.varint(BigInt((groups << 1) | 1));
  run.push(...header.out);
  for (let g = 0; g < groups; g++) {
    let byte = 0;
    for (let k = 0; k < 8; k++) if (present[g * 8 + k]) byte |= 1 << k;
    run.push(byte);
  }
  return [run.length & 0xff, (run.length >> 8) & 0xff, (run.length >> 16) & 0xff, run.length >>> 24, ...run];
}

/** A Parquet file with an INT64 `id` column (0, 1, …) and the given nullable INT96 columns. */
export function int96ParquetFile(columns: readonly Int96Column[]): Uint8Array {
  const rows = columns[0]?.values.length ?? 0;
  const file: number[] = [...new TextEncoder().encode('PAR1')];
  const chunks: { name: string; type: number; offset: number; size: number; optional: boolean }[] = [];
  const writeChunk = (name: string, type: number, optional: boolean, body: number[]) => {
    const header = new Compact();
    header.struct(null, () => {
      header.i32(1, 0); // DATA_PAGE
      header.i32(2, body.length);
      header.i32(3, body.length);
      header.struct(5, () => {
        header.i32(1, rows);
        header.i32(2, 0); // PLAIN
        header.i32(3, 3); // RLE
        header.i32(4, 3); // RLE
      });
    });
    chunks.push({ name, type, offset: file.length, size: header.out.length + body.length, optional });
    file.push(...header.out, ...body);
  };
  const ids: number[] = [];
  for (let i = 0; i < rows; i++) {
    const b = new DataView(new ArrayBuffer(8));
    b.setBigInt64(0, BigInt(i), true);
    ids.push(...new Uint8Array(b.buffer));
  }
  writeChunk('id', 2, false, ids);
  for (const c of columns) {
    const body = definitionLevels(c.values.map((v) => v !== null));
    for (const v of c.values) if (v !== null) body.push(...int96(v));
    writeChunk(c.name, 3, true, body);
  }
  const meta = new Compact();
  meta.struct(null, () => {
    meta.i32(1, 1);
    meta.list(2, T.STRUCT, chunks.length + 1);
    meta.struct(null, () => { meta.binary(4, 'schema'); meta.i32(5, chunks.length); });
    for (const c of chunks) meta.struct(null, () => { meta.i32(1, c.type); meta.i32(3, c.optional ? 1 : 0); meta.binary(4, c.name); });
    meta.i64(3, rows);
    meta.list(4, T.STRUCT, 1);
    meta.struct(null, () => {
      meta.list(1, T.STRUCT, chunks.length);
      for (const c of chunks) {
        meta.struct(null, () => {
          meta.i64(2, c.offset);
          meta.struct(3, () => {
            meta.i32(1, c.type);
            meta.list(2, T.I32, 2);
            meta.zigzag(0n); // PLAIN
            meta.zigzag(3n); // RLE
            meta.list(3, T.BINARY, 1);
            meta.bytes(c.name);
            meta.i32(4, 0); // UNCOMPRESSED
            meta.i64(5, rows);
            meta.i64(6, c.size);
            meta.i64(7, c.size);
            meta.i64(9, c.offset);
          });
        });
      }
      meta.i64(2, chunks.reduce((s, c) => s + c.size, 0));
      meta.i64(3, rows);
    });
    meta.binary(6, 'counterweight test writer');
  });
  const length = meta.out.length;
  file.push(...meta.out, length & 0xff, (length >> 8) & 0xff, (length >> 16) & 0xff, length >>> 24, ...new TextEncoder().encode('PAR1'));
  return new Uint8Array(file);
}
