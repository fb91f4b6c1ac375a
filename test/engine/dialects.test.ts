/**
 * Each SQL dialect's spellings answer the same on its own engine (STYLE.md §6: the SQL a builder writes
 * is run on a real engine): DuckDB in-process and a local ClickHouse server (18.16 on this machine).
 * Expected values are worked by hand from the five rows below and the definitions in
 * app/core/sql/dialect.ts; the epoch value of 2024-01-02 03:04:05 UTC is 1704164645 s (date -u -d ... +%s).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fingerprintSql, parseFingerprint } from '../../app/core/scan/fingerprint.ts';
import type { Dialect } from '../../app/core/sql/dialect.ts';
import { clickhouse } from '../../app/core/sql/dialect-clickhouse.ts';
import { duckdb } from '../../app/core/sql/dialect-duckdb.ts';
import { dialectNamed } from '../../app/core/sql/dialects.ts';
import type { ClickHouseEngine } from '../../app/engine/clickhouse.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';
import { CLUSTER, clickhouseBinary, clickhouseRequired, startLocalShards, type LocalShards } from './clickhouse-servers.ts';

/** x: a number that may be NULL, NaN or infinite; s: text that may parse as a number; t: a date-time. */
const ROWS: readonly [string, string, string][] = [
  ['1', '1.5', '2024-01-02 03:04:05'],
  ['NULL', 'abc', '2024-01-02 03:04:05'],
  ['nan', '2', '2024-01-02 03:04:05'],
  ['3', 'NULL', '2024-01-02 03:04:05'],
  ['-inf', 'x', '2024-01-02 03:04:05'],
];

const CASES: readonly { name: string; sql: (d: Dialect) => string; expected: unknown }[] = [
  { name: 'countIf with a NaN guard', sql: (d) => d.countIf(`x > 1 AND NOT ${d.isNaN('x')}`), expected: 1 },
  { name: 'countIf of NaN', sql: (d) => d.countIf(d.isNaN('x')), expected: 1 },
  { name: 'sumIf over finite values', sql: (d) => d.sumIf('x', d.isFinite('x')), expected: 4 },
  { name: 'sumIf over no rows is 0', sql: (d) => d.sumIf('x', `x > 100 AND NOT ${d.isNaN('x')}`), expected: 0 },
  { name: 'minIf over finite values', sql: (d) => d.minIf('x', d.isFinite('x')), expected: 1 },
  { name: 'maxIf over finite values', sql: (d) => d.maxIf('x', d.isFinite('x')), expected: 3 },
  { name: 'minIf over no rows is NULL', sql: (d) => d.minIf('x', `x > 100 AND NOT ${d.isNaN('x')}`), expected: null },
  { name: 'tryDouble parses numbers only', sql: (d) => d.countIf(`${d.tryDouble('s')} IS NOT NULL`), expected: 2 },
  { name: 'tryDouble values', sql: (d) => d.sumIf(d.tryDouble('s'), `${d.tryDouble('s')} IS NOT NULL`), expected: 3.5 },
  { name: 'epochUs', sql: (d) => d.maxIf(d.epochUs('t'), '1 = 1'), expected: 1704164645000000 },
  { name: 'literal with a quote and a backslash', sql: (d) => d.countIf(`${d.literal("it's \\ ok")} = ${d.literal("it's \\ ok")}`), expected: 5 },
  { name: 'hash64: equal texts hash equal, two texts apart', sql: (d) => d.countIf(`${d.hash64(d.literal('d-1'))} = ${d.hash64(d.toText(d.literal('d-1')))} AND ${d.hash64(d.literal('d-1'))} <> ${d.hash64(d.literal('d-2'))}`), expected: 5 },
  { name: 'double literal', sql: (d) => d.sumIf(d.double(0.25), '1 = 1'), expected: 1.25 },
];

const tsv = (rows: readonly (readonly string[])[]) => rows.map((r) => r.map((v) => (v === 'NULL' ? '\\N' : v)).join('\t')).join('\n') + '\n';

function duckValues(rows: readonly (readonly string[])[]): string {
  const v = (x: string) => (x === 'NULL' ? 'NULL' : x === 'nan' ? "'nan'::DOUBLE" : x === '-inf' ? "'-inf'::DOUBLE" : x);
  const body = rows.map(([x, s, t]) => `(${v(x as string)}::DOUBLE, ${s === 'NULL' ? 'NULL' : `'${s}'`}, TIMESTAMP '${t}')`).join(', ');
  return `(SELECT * FROM (VALUES ${body}) AS v(x, s, t))`;
}

function number(v: unknown): unknown {
  return typeof v === 'bigint' ? Number(v) : v;
}

describe('DuckDB dialect on native DuckDB', () => {
  let engine: NativeEngine;
  beforeAll(async () => { engine = await createNativeEngine({ threads: 1 }); });
  afterAll(async () => { await engine?.close(); });

  it.each(CASES)('$name', async ({ sql, expected }) => {
    const t = await engine.query(`SELECT ${sql(duckdb)} AS v FROM ${duckValues(ROWS)}`);
    expect(number(t.columns[0]?.[0])).toEqual(expected);
  });

  it('the fingerprint does not depend on row order and sees a changed value', async () => {
    const fp = async (rows: readonly (readonly string[])[]) => parseFingerprint(duckdb, await engine.query(fingerprintSql(duckdb, duckValues(rows), ['x', 's', 't'])), ['x', 's', 't']);
    const a = await fp(ROWS);
    expect(a.rows).toBe(5);
    expect(await fp([...ROWS].reverse())).toEqual(a);
    const changed = await fp([...ROWS.slice(0, 4), ['-inf', 'y', '2024-01-02 03:04:05']]);
    expect(changed.hash).not.toBe(a.hash);
  });
});

const binary = clickhouseBinary();
const missing = binary.path === null ? binary.reason : null;

describe.skipIf(missing !== null && !clickhouseRequired())('ClickHouse dialect on a local server', () => {
  let shards: LocalShards;
  let engine: ClickHouseEngine;
  beforeAll(async () => {
    if (missing) throw new Error(`the ClickHouse tests must run here: ${missing}`);
    shards = await startLocalShards(2);
    const ddl = (name: string) => `CREATE TABLE ${name} (x Nullable(Float64), s Nullable(String), t DateTime) ENGINE = MergeTree() ORDER BY tuple()`;
    await shards.admin(0, ddl('v'));
    await shards.admin(0, 'INSERT INTO v FORMAT TabSeparated', tsv(ROWS));
    await shards.admin(0, ddl('reversed'));
    await shards.admin(0, 'INSERT INTO reversed FORMAT TabSeparated', tsv([...ROWS].reverse()));
    for (const s of [0, 1]) await shards.admin(s, ddl('part'));
    await shards.admin(0, 'INSERT INTO part FORMAT TabSeparated', tsv(ROWS.slice(0, 2)));
    await shards.admin(1, 'INSERT INTO part FORMAT TabSeparated', tsv(ROWS.slice(2)));
    await shards.admin(0, `CREATE TABLE part_all AS part ENGINE = Distributed(${CLUSTER}, default, part)`);
    engine = await shards.connect();
  }, 120_000);
  afterAll(() => shards?.stop(), 60_000);

  it.each(CASES)('$name', async ({ sql, expected }) => {
    const t = await engine.query(`SELECT ${sql(clickhouse)} AS v FROM default.v`);
    expect(number(t.columns[0]?.[0])).toEqual(expected);
  });

  it('the fingerprint is the same for any row order and any shard split', async () => {
    const fp = async (relation: string) => parseFingerprint(clickhouse, await engine.query(fingerprintSql(clickhouse, relation, ['x', 's', 't'])), ['x', 's', 't']);
    const a = await fp('default.v');
    expect(a.rows).toBe(5);
    expect(await fp('default.reversed')).toEqual(a);
    expect(await fp('default.part_all')).toEqual(a);
    expect((await fp('(SELECT * FROM default.v WHERE isNaN(x) = 0 OR x IS NULL)')).hash).not.toBe(a.hash);
  });
});

describe('dialect names', () => {
  it('finds each and names the known ones for a typo', () => {
    expect(dialectNamed('clickhouse')).toBe(clickhouse);
    expect(() => dialectNamed('clickhose')).toThrow('unknown SQL dialect "clickhose" (known: duckdb, clickhouse)');
  });
});
