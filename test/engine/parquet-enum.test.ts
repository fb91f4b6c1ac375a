/**
 * Low-cardinality text columns held as ENUMs in DuckDB-Wasm's Parquet load (app/engine/parquet/dictionary.ts,
 * load.ts): the values read from the dictionary pages are the column's distinct values as native DuckDB reads
 * them, the loaded relation still answers with native DuckDB's types and values, and a piece holding a value
 * the dictionaries did not list still loads, as text. Native DuckDB writes the files and is the reference.
 */
import { mkdtempSync, openAsBlob, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import type { DuckDBConnection } from '@duckdb/node-api';
import { Table, tableFromIPC, tableToIPC, vectorFromArray, Utf8 } from 'apache-arrow';
import type { Vector } from 'apache-arrow';
import type { ColumnMetaData } from 'hyparquet';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createNativeEngine } from '../../app/engine/native.ts';
import { parquetWasmDecoder } from '../../app/engine/parquet/decoder.ts';
import type { ParquetWasmModule, RowGroupDecoder } from '../../app/engine/parquet/decoder.ts';
import { dictionaryOnly, enumValues } from '../../app/engine/parquet/dictionary.ts';
import { readFooter } from '../../app/engine/parquet/footer.ts';
import { loadParquet } from '../../app/engine/parquet/load.ts';
import { topLevelColumns } from '../../app/engine/parquet/schema.ts';
import type { Engine } from '../../app/engine/types.ts';
import { createWasmNodeEngine } from '../../app/engine/wasm-node.ts';

const require = createRequire(import.meta.url);
const duckdb = require('@duckdb/duckdb-wasm/dist/duckdb-node-blocking.cjs');

let dir: string;
let native: Engine;
let wasm: Engine;
let writer: DuckDBConnection;
// Eight row groups of 2,048 rows; `policy` takes a new value in each of the later row groups, as a log whose
// policy is revised over time does, so the first row group's dictionary alone would not list them all.
const SELECT = `
SELECT i::BIGINT AS id,
  'decision-' || lpad(i::VARCHAR, 8, '0') AS decision,
  CASE WHEN i % 9 = 0 THEN NULL ELSE ['old-town', 'harbour', 'hill''s end', '', 'über-straße'][1 + i % 5] END AS region,
  'v' || (i // 2048)::VARCHAR AS policy,
  (i % 4)::VARCHAR AS digit_text,
  i % 3 AS action
FROM range(16384) t(i)`;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'cw-parquet-enum-'));
  const db = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
  writer = await db.connect();
  for (const codec of ['zstd', 'snappy', 'gzip']) {
    await writer.run(`COPY (${SELECT}) TO '${join(dir, `${codec}.parquet`)}' (FORMAT parquet, COMPRESSION ${codec}, ROW_GROUP_SIZE 2048)`);
  }
  native = await createNativeEngine();
  wasm = await createWasmNodeEngine();
}, 120_000);
afterAll(async () => {
  writer?.closeSync();
  await native?.close();
  await wasm?.close();
  rmSync(dir, { recursive: true, force: true });
});

async function distinct(path: string, column: string): Promise<string[]> {
  const rows = (await (await writer.run(`SELECT DISTINCT "${column}" FROM '${path}' WHERE "${column}" IS NOT NULL`)).getRows()).map((r) => String(r[0]));
  return rows.sort();
}

/** Every column as text in id order, and the types: what the engines must agree on. */
async function contents(engine: Engine, relation: string): Promise<{ types: string[]; text: unknown[] }> {
  const described = await engine.query(`DESCRIBE ${relation}`);
  const names = (described.columns[0] ?? []).map(String);
  const text = await engine.query(`SELECT ${names.map((n) => `string_agg(coalesce("${n}"::VARCHAR, '∅'), '|' ORDER BY id) AS "${n}"`).join(', ')} FROM ${relation}`);
  return { types: (described.columns[1] ?? []).map((t, i) => `${names[i]} ${String(t)}`), text: text.columns.map((c) => c[0]) };
}

describe('the dictionary pages give each low-cardinality text column its values', () => {
  for (const codec of ['zstd', 'snappy', 'gzip']) {
    it(`${codec}: the same values native DuckDB reads, and only text columns of few values`, async () => {
      const path = join(dir, `${codec}.parquet`);
      const blob = await openAsBlob(path);
      const footer = await readFooter(blob, path);
      const values = await enumValues(blob, footer, topLevelColumns(footer));
      expect(footer.row_groups.length).toBe(8);
      // decision: 16,384 distinct values, over MAX_ENUM_VALUES; id and action are not text
      expect([...values.keys()].sort()).toEqual(['digit_text', 'policy', 'region']);
      for (const column of ['region', 'policy', 'digit_text']) expect(values.get(column)).toEqual(await distinct(path, column));
      expect(values.get('policy')).toHaveLength(8);
    });
  }

  it('a chunk that fell back to plain pages, or has no dictionary, is not taken (Apache Parquet format, "Encodings")', () => {
    const meta = (encodings: string[], more: Partial<ColumnMetaData> = {}) => ({ encodings, dictionary_page_offset: 4n, ...more }) as unknown as ColumnMetaData;
    expect(dictionaryOnly(meta(['PLAIN_DICTIONARY']))).toBe(true);
    expect(dictionaryOnly(meta(['RLE_DICTIONARY', 'RLE']))).toBe(true);
    expect(dictionaryOnly(meta(['PLAIN_DICTIONARY', 'PLAIN']))).toBe(false);
    expect(dictionaryOnly(meta(['PLAIN']))).toBe(false);
    expect(dictionaryOnly(meta(['PLAIN_DICTIONARY'], { dictionary_page_offset: undefined }))).toBe(false);
    // arrow-rs and parquet-mr list PLAIN for the dictionary page itself; their per-page stats decide
    const stats = (data: string) => meta(['PLAIN', 'RLE', 'RLE_DICTIONARY'], { encoding_stats: [{ page_type: 'DICTIONARY_PAGE', encoding: 'PLAIN', count: 1 }, { page_type: 'DATA_PAGE', encoding: data, count: 3 }] } as Partial<ColumnMetaData>);
    expect(dictionaryOnly(stats('RLE_DICTIONARY'))).toBe(true);
    expect(dictionaryOnly(stats('PLAIN'))).toBe(false);
  });
});

describe('the load keeps them as ENUMs and answers as native DuckDB does', () => {
  it('the part table holds ENUMs, the relation text with native DuckDB\'s types and values', async () => {
    const path = join(dir, 'zstd.parquet');
    const [n, w] = [await native.register({ kind: 'path', paths: [path] }), await wasm.register({ kind: 'path', paths: [path] })];
    const [a, b] = [await contents(native, n.relation), await contents(wasm, w.relation)];
    expect(b.types).toEqual(a.types);
    expect(b.text).toEqual(a.text);
    const stored = await wasm.query("SELECT column_name, data_type FROM duckdb_columns() WHERE table_name LIKE 'src\\_%\\_part\\_1' ESCAPE '\\' ORDER BY column_index");
    const types = Object.fromEntries((stored.columns[0] ?? []).map((c, i) => [String(c), String(stored.columns[1]?.[i])]));
    expect(types.region).toMatch(/^ENUM\(/);
    expect(types.policy).toMatch(/^ENUM\(/);
    expect(types.decision).toBe('VARCHAR');
  });
});

describe('a value the dictionaries did not list', () => {
  it('fails the cast of its piece, and the part is loaded as text with every value', async () => {
    const path = join(dir, 'snappy.parquet');
    const blob = await openAsBlob(path);
    const real = parquetWasmDecoder(require('parquet-wasm') as ParquetWasmModule);
    // A decoder that answers a region no dictionary page holds in the fifth row group (a writer whose metadata misleads).
    const lying: RowGroupDecoder = async (b) => {
      const reader = await real(b);
      return {
        async rowGroup(index, columns, rows) {
          const ipc = await reader.rowGroup(index, columns, rows);
          if (index !== 4) return ipc;
          const t = tableFromIPC(ipc);
          const region = vectorFromArray(Array.from({ length: t.numRows }, (_, i) => (i === 8 ? 'unlisted' : t.getChild('region')?.get(i) ?? null)), new Utf8());
          return tableToIPC(new Table(Object.fromEntries(t.schema.fields.map((f) => [f.name, f.name === 'region' ? region : t.getChild(f.name) as Vector]))), 'stream');
        },
        close: () => reader.close(),
      };
    };
    const db = await duckdb.createDuckDB({ mvp: { mainModule: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-mvp.wasm'), mainWorker: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-node-mvp.worker.cjs') }, eh: { mainModule: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-eh.wasm'), mainWorker: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-node-eh.worker.cjs') } }, new duckdb.VoidLogger(), duckdb.NODE_RUNTIME);
    await db.instantiate(() => undefined);
    db.open({});
    const conn = db.connect();
    const statements: string[] = [];
    // Pieces of one DuckDB row group (2,048 rows here), so the fifth Parquet row group is a piece of its own.
    const loaded = await loadParquet([{ name: 'snappy.parquet', blob }], lying, {
      append: async (table, ipc, create) => { conn.insertArrowFromIPCStream(ipc, { name: table, create }); },
      run: async (sql) => { statements.push(sql); conn.query(sql); },
    }, { tablePrefix: 't', budgetBytes: 1024 ** 3, hivePartitioning: false, pieceRows: 2048 });
    const q = (sql: string) => conn.query(sql).toArray().map((r: { toJSON(): Record<string, unknown> }) => r.toJSON());
    expect(statements.filter((s) => /SET DATA TYPE ENUM/.test(s))).toHaveLength(3);
    expect(statements.filter((s) => /SET DATA TYPE VARCHAR/.test(s))).toHaveLength(3);
    expect(q("SELECT data_type FROM duckdb_columns() WHERE table_name = 't_1' AND column_name = 'region'")[0]?.data_type).toBe('VARCHAR');
    const rows = q(`SELECT count(*)::INTEGER AS n, count(region)::INTEGER AS regions, sum(CASE WHEN region = 'unlisted' THEN 1 ELSE 0 END)::INTEGER AS unlisted FROM (${loaded.selectSql})`)[0];
    // 16,384 rows; every ninth region is null (1,821 of them), one replaced by the decoder
    expect(rows).toEqual({ n: 16_384, regions: 16_384 - 1821, unlisted: 1 });
    // the other rows as written: the same values native DuckDB reads, but for the one replaced
    const ours = q(`SELECT string_agg(coalesce(region, '∅'), '|' ORDER BY id) AS r FROM (${loaded.selectSql}) WHERE id <> ${4 * 2048 + 8}`)[0]?.r;
    const theirs = (await (await writer.run(`SELECT string_agg(coalesce(region, '∅'), '|' ORDER BY id) AS r FROM '${path}' WHERE id <> ${4 * 2048 + 8}`)).getRows())[0]?.[0];
    expect(ours).toBe(theirs);
    conn.close();
    db.reset();
  });
});
