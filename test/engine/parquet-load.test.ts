/**
 * Parquet into DuckDB-Wasm through Arrow (app/engine/parquet/): every codec DuckDB writes, both data page
 * versions (V2 brings DELTA encodings), dictionary and plain strings, nulls, and the timestamp, date and
 * decimal logical types load with the same types and values native DuckDB's read_parquet gives. The files
 * are written by native DuckDB (COPY ... TO) into a temporary folder; native DuckDB is the reference.
 */
import { mkdtempSync, openAsBlob, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { tableFromArrays, tableFromIPC, tableToIPC } from 'apache-arrow';
import type { Table } from 'apache-arrow';
import type { FileMetaData } from 'hyparquet';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createNativeEngine } from '../../app/engine/native.ts';
import { rowGroupAligner } from '../../app/engine/parquet/align.ts';
import { parquetWasmDecoder } from '../../app/engine/parquet/decoder.ts';
import type { ParquetWasmModule } from '../../app/engine/parquet/decoder.ts';
import { readFooter } from '../../app/engine/parquet/footer.ts';
import { loadParquet, tooLargeMessage } from '../../app/engine/parquet/load.ts';
import { duckdbTypeOf, hiveValues, topLevelColumns, unreadableColumn } from '../../app/engine/parquet/schema.ts';
import { EngineError } from '../../app/engine/types.ts';
import type { Engine } from '../../app/engine/types.ts';
import { createWasmNodeEngine } from '../../app/engine/wasm-node.ts';
import { floorMicros } from '../../app/engine/parquet/int96.ts';
import { int96ParquetFile } from './int96-parquet.ts';
import { CODECS, coverageFile, PAGE_VERSIONS, writeCoverageFiles } from './parquet-coverage.ts';

const require = createRequire(import.meta.url);

let dir: string;
let native: Engine;
let wasm: Engine;
// Fourteen files written by native DuckDB and a DuckDB-Wasm instance: minutes on a loaded machine.
beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'cw-parquet-load-'));
  const db = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
  const c = await db.connect();
  await writeCoverageFiles((sql) => c.run(sql), dir, 6000);
  c.closeSync();
  db.closeSync();
  // INT96: no writer here emits it, so the file is written by hand (int96-parquet.ts). The values probe what
  // wraps or rounds differently: sub-microsecond nanoseconds either side of the epoch, the edges of the
  // 64-bit nanosecond range (1677-09-21 to 2262-04-11) and dates outside it, nulls, a leap day.
  const ns = (iso: string, extra = 0n) => BigInt(Date.parse(iso)) * 1_000_000n + extra;
  writeFileSync(join(dir, 'int96.parquet'), int96ParquetFile([
    { name: 'logged_at', values: [ns('2026-03-01T12:34:56.123Z', 456_789n), null, ns('1969-12-31T23:59:59.999Z', 999_500n), ns('1900-01-01T00:00:00Z'), ns('2262-04-11T23:47:16.854Z', 775_807n), ns('1970-01-01T00:00:00Z', 1n), null, ns('2000-02-29T23:59:59.999Z', 999_999n), ns('1600-06-15T10:00:00Z'), ns('2300-01-01T00:00:00Z', 999n)] },
    { name: 'settled_at', values: [null, ns('2026-03-02T00:00:00Z'), ns('1677-09-21T00:12:43.145Z', 224_192n), null, null, null, null, null, null, ns('1969-12-31T23:59:59.999Z', 999_999n)] },
  ]));
  native = await createNativeEngine();
  wasm = await createWasmNodeEngine();
}, 300_000);
afterAll(async () => {
  await native?.close();
  await wasm?.close();
  rmSync(dir, { recursive: true, force: true });
});

/** Every column as text, in id order, and the column types: what the two engines must agree on. */
async function contents(engine: Engine, path: string): Promise<{ types: unknown[]; text: unknown[] }> {
  const source = await engine.register({ kind: 'path', paths: [path] });
  const described = await engine.query(`DESCRIBE ${source.relation}`);
  const names = (described.columns[0] ?? []).map(String);
  const text = await engine.query(`SELECT ${names.map((n) => `string_agg(coalesce("${n}"::VARCHAR, '∅'), '|' ORDER BY id) AS "${n}"`).join(', ')}, count(*) AS n FROM ${source.relation}`);
  return { types: (described.columns[1] ?? []).map((t, i) => `${names[i]} ${String(t)}`), text: text.columns.map((c) => c[0]) };
}

describe('every codec and page version loads as native DuckDB reads it', () => {
  for (const codec of CODECS) {
    for (const version of PAGE_VERSIONS) {
      it(`${codec}, data pages ${version}`, async () => {
        const path = coverageFile(dir, codec, version);
        const [a, b] = [await contents(native, path), await contents(wasm, path)];
        expect(b.types).toEqual(a.types);
        expect(b.text).toEqual(a.text);
      });
    }
  }
});

describe('INT96 timestamps', () => {
  it('load with the type and values native DuckDB reads, also outside the 64-bit nanosecond range and before the epoch', async () => {
    const path = join(dir, 'int96.parquet');
    const [a, b] = [await contents(native, path), await contents(wasm, path)];
    expect(a.types).toEqual(['id BIGINT', 'logged_at TIMESTAMP', 'settled_at TIMESTAMP']);
    expect(b.types).toEqual(a.types);
    expect(b.text).toEqual(a.text);
    // Hand-checked against the values written: 999,999,500 ns before 1970 floors to .999999, 1600 stays 1600.
    expect(String(a.text[1])).toContain('1969-12-31 23:59:59.999999|1900-01-01 00:00:00');
    expect(String(a.text[1])).toContain('1600-06-15 10:00:00');
  });

  it('nanoseconds floor to microseconds on both sides of the epoch', () => {
    expect([floorMicros(1_999n), floorMicros(-1n), floorMicros(-1_000n), floorMicros(-1_001n), floorMicros(0n)]).toEqual([1n, -1n, -1n, -2n, 0n]);
  });
});

describe('footer rules', () => {
  // Hand-built footers: the element fields are those of the Parquet format's SchemaElement (parquet.thrift).
  const footer = (codec: string, extra: Record<string, unknown> = {}): FileMetaData => ({
    version: 1, num_rows: 10n, metadata_length: 0,
    schema: [{ name: 'root', num_children: 2 }, { name: 'propensity', type: 'DOUBLE' }, { name: 'gap', type: 'FIXED_LEN_BYTE_ARRAY', type_length: 12, converted_type: 'INTERVAL', ...extra }],
    row_groups: [{ num_rows: 10n, total_byte_size: 0n, columns: [
      { file_offset: 0n, meta_data: { type: 'DOUBLE', codec, encodings: [], path_in_schema: ['propensity'], num_values: 10n, total_uncompressed_size: 80n, total_compressed_size: 80n, data_page_offset: 4n } },
      { file_offset: 0n, meta_data: { type: 'FIXED_LEN_BYTE_ARRAY', codec: 'SNAPPY', encodings: [], path_in_schema: ['gap'], num_values: 10n, total_uncompressed_size: 120n, total_compressed_size: 120n, data_page_offset: 84n } },
    ] }],
  } as unknown as FileMetaData);

  it('a codec the decoder lacks names the column and the codec', () => {
    const f = footer('LZO');
    expect(unreadableColumn(f, topLevelColumns(f))).toEqual({ column: 'propensity', why: expect.stringMatching(/compressed with LZO/) });
  });

  it('a type the decoder lacks names the column', () => {
    const f = footer('SNAPPY');
    expect(unreadableColumn(f, topLevelColumns(f))).toEqual({ column: 'gap', why: expect.stringMatching(/INTERVAL/) });
  });

  it('INT96 reads as TIMESTAMP, as DuckDB\'s reader maps it', () => {
    expect(duckdbTypeOf({ name: 't', type: 'INT96' })).toBe('TIMESTAMP');
  });

  it('hive folder names give key and value', () => {
    expect(hiveValues('/data/log/region=north/day=2026-03-01/part-0.parquet')).toEqual([['region', 'north'], ['day', '2026-03-01']]);
  });

  it('the too-large message says how much the engine holds and how many rows fit', () => {
    const m = tooLargeMessage('big.parquet', 4 * 1024 ** 3, 2 * 1024 ** 3, 100_000_000);
    expect(m).toMatch(/4\.0 GB/);
    expect(m).toMatch(/holds about 2\.0 GB/);
    expect(m).toMatch(/about 50,000,000 rows/);
  });

  it('a log over the budget is refused with the size that fits', async () => {
    const engine = await createWasmNodeEngine({ parquetBudgetBytes: 100_000 });
    const error = await engine.register({ kind: 'path', paths: [join(dir, 'zstd-V1.parquet')] }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(EngineError);
    expect((error as EngineError).message).toMatch(/too large for the in-browser engine.*20,000 rows.*holds about 1 MB/s);
    await engine.close();
  });

  it('the refusal comes before any row group is decoded or appended (from the footer alone)', async () => {
    const decoded: number[] = [];
    const appended: string[] = [];
    const real = parquetWasmDecoder(require('parquet-wasm') as ParquetWasmModule);
    const counting = (blob: Blob) => { decoded.push(blob.size); return real(blob); };
    const part = { name: 'zstd-V1.parquet', blob: await openAsBlob(join(dir, 'zstd-V1.parquet')) };
    const error = await loadParquet([part], counting, { append: async (table) => { appended.push(table); }, run: async () => undefined }, { tablePrefix: 't', budgetBytes: 100_000, hivePartitioning: false }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(EngineError);
    expect(decoded).toEqual([]);
    expect(appended).toEqual([]);
    // the same file under a budget it fits is decoded and appended: the counters do count
    await loadParquet([part], counting, { append: async (table) => { appended.push(table); }, run: async () => undefined }, { tablePrefix: 't', budgetBytes: 1024 ** 3, hivePartitioning: false });
    expect(decoded.length).toBeGreaterThan(0);
    expect(appended.length).toBeGreaterThan(0);
  });
});

describe('row groups re-cut to whole DuckDB row groups', () => {
  const rowsOf = (t: Table) => JSON.stringify(t.toArray(), (_k, v: unknown) => (typeof v === 'bigint' ? `${v}n` : v));

  it('pieces hold exactly the piece size but the last, and the same rows in the same order', async () => {
    // DuckDB's writer fills row groups in whole 2,048-row vectors: ROW_GROUP_SIZE 6000 above gives 6,144-row groups.
    const path = join(dir, 'zstd-V2.parquet');
    const reader = await parquetWasmDecoder(require('parquet-wasm') as ParquetWasmModule)(await openAsBlob(path));
    const footer = await readFooter(await openAsBlob(path), path);
    const names = topLevelColumns(footer).map((c) => c.name);
    const aligner = rowGroupAligner(7_000);
    const groups: Table[] = [];
    const pieces: Table[] = [];
    for (const [i, g] of footer.row_groups.entries()) {
      const ipc = await reader.rowGroup(i, names, Number(g.num_rows));
      groups.push(tableFromIPC(ipc));
      pieces.push(...aligner.push(ipc).map((p) => tableFromIPC(p)));
    }
    const rest = aligner.rest();
    if (rest) pieces.push(tableFromIPC(rest));
    reader.close();
    expect(groups.map((t) => t.numRows)).toEqual([6144, 6144, 6144, 1568]);
    expect(pieces.map((t) => t.numRows)).toEqual([7000, 7000, 6000]);
    expect(aligner.rest()).toBeNull();
    const whole = (ts: Table[]) => ts.reduce((a, b) => a.concat(b));
    expect(rowsOf(whole(pieces))).toEqual(rowsOf(whole(groups)));
    expect(String(whole(pieces).schema)).toEqual(String(whole(groups).schema));
  });

  it('a row group of exactly the piece size is passed on as it came', () => {
    const ipc = tableToIPC(tableFromArrays({ x: Int32Array.from({ length: 10 }, (_, i) => i) }), 'stream');
    const aligner = rowGroupAligner(10);
    expect(aligner.push(ipc)).toEqual([ipc]);
    expect(aligner.push(ipc)[0]).toBe(ipc);
    expect(aligner.rest()).toBeNull();
  });
});
