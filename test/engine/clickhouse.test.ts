/**
 * The ClickHouse adapter against two real local servers (test/engine/clickhouse-servers.ts): values,
 * both shards through remote() and a Distributed table, caps, cancellation, timeouts, read-only, and a
 * clear error for each way a connection or a table can be wrong. Expected values are the rows the test
 * itself loads; ClickHouse's text rules are from its documentation ("Formats", TabSeparated).
 */
import { connect, createServer, type AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connectClickHouse, type ClickHouseEngine } from '../../app/engine/clickhouse.ts';
import { networkError } from '../../app/engine/clickhouse-errors.ts';
import { EngineError } from '../../app/engine/types.ts';
import { AUDITOR, CLUSTER, clickhouseBinary, clickhouseRequired, startLocalShards, type LocalShards } from './clickhouse-servers.ts';

const binary = clickhouseBinary();
const missing = binary.path === null ? binary.reason : null;
if (missing && !clickhouseRequired()) console.warn(`ClickHouse adapter tests skipped: ${missing}`);

async function rejection(p: Promise<unknown>): Promise<EngineError> {
  try {
    await p;
  } catch (e) {
    if (e instanceof EngineError) return e;
    throw e;
  }
  throw new Error('expected the promise to reject');
}

/** Queries of ours still running on a server (system.processes), to see that a cancelled one stopped there too. */
async function runningOf(shards: LocalShards, marker: string): Promise<number> {
  const text = await shards.admin(0, `SELECT count() FROM system.processes WHERE query LIKE '%${marker}%' AND query NOT LIKE '%system.processes%' FORMAT TSV`);
  return Number(text.trim());
}

async function until(predicate: () => Promise<boolean>, ms: number): Promise<boolean> {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    if (await predicate()) return true;
    await new Promise((r) => setTimeout(r, 200));
  }
  return predicate();
}

describe.skipIf(missing !== null && !clickhouseRequired())('ClickHouse adapter on two local shards', () => {
  let shards: LocalShards;
  let engine: ClickHouseEngine;
  let remote: string;

  beforeAll(async () => {
    if (missing) throw new Error(`the ClickHouse tests must run here: ${missing}`);
    shards = await startLocalShards(2);
    const ddl = 'CREATE TABLE decisions (id Int64, p Nullable(Float64), promotion String, day Date, at DateTime, tags Array(String), amount Decimal(10, 2)) ENGINE = MergeTree() ORDER BY id';
    for (const s of [0, 1]) await shards.admin(s, ddl);
    await shards.admin(0, 'INSERT INTO decisions FORMAT TabSeparated', "1\t0.25\tbakery\t2026-03-01\t2026-03-01 08:00:00\t['a','b']\t12.50\n2\t\\N\ttab\\there\t2026-03-01\t2026-03-01 09:30:15\t[]\t-0.05\n");
    await shards.admin(1, 'INSERT INTO decisions FORMAT TabSeparated', "3\tnan\tit's \\\\ new\\nline\t2026-03-02\t2026-03-02 23:59:59\t['c']\t0.00\n4\tinf\tbakery\t2026-03-02\t2026-03-02 00:00:00\t['x\\'y']\t1.00\n");
    await shards.admin(0, `CREATE TABLE decisions_all AS decisions ENGINE = Distributed(${CLUSTER}, default, decisions)`);
    remote = `remote('127.0.0.1:${shards.servers[0]!.tcpPort},127.0.0.1:${shards.servers[1]!.tcpPort}', default, decisions)`;
    engine = await shards.connect();
  }, 120_000);

  afterAll(() => shards?.stop(), 60_000);

  it('reads the server version', () => {
    expect(engine.version).toMatch(/^\d+\.\d+/);
    expect(engine.versionParts[0]).toBeGreaterThanOrEqual(18);
  });

  it('converts every value by the rules of app/core/table.ts', async () => {
    const t = await engine.query(`SELECT id, p, promotion, day, at, tags, amount FROM ${remote} ORDER BY id`);
    expect(t.names).toEqual(['id', 'p', 'promotion', 'day', 'at', 'tags', 'amount']);
    expect(t.types).toEqual(['BIGINT', 'DOUBLE', 'VARCHAR', 'DATE', 'TIMESTAMP', 'VARCHAR[]', 'DECIMAL(10,2)']);
    expect(t.columns[0]).toEqual([1n, 2n, 3n, 4n]);
    expect(t.columns[1]).toEqual([0.25, null, NaN, Infinity]);
    expect(t.columns[2]).toEqual(['bakery', 'tab\there', "it's \\ new\nline", 'bakery']);
    expect(t.columns[3]).toEqual(['2026-03-01', '2026-03-01', '2026-03-02', '2026-03-02']);
    expect(t.columns[4]).toEqual(['2026-03-01T08:00:00.000000Z', '2026-03-01T09:30:15.000000Z', '2026-03-02T23:59:59.000000Z', '2026-03-02T00:00:00.000000Z']);
    expect(t.columns[5]).toEqual([['a', 'b'], [], ['c'], ["x'y"]]);
    expect(t.columns[6]).toEqual(['12.50', '-0.05', '0.00', '1.00']);
  });

  it('Float64 values read back bit-exact (stored from RowBinary, printed as text, read by the adapter)', async () => {
    // 18.16 parses numbers in text input up to one unit in the last place off, so the values go in as bytes
    const xs = [0.01, 0.002, 1 / 3, 2 / 3, 26.63158973890725, 3.271356836816816, 5e-324, 1.7976931348623157e308, -0.1];
    await shards.admin(0, 'CREATE TABLE exact (i UInt32, x Float64) ENGINE = MergeTree() ORDER BY i');
    const rows = Buffer.alloc(xs.length * 12);
    xs.forEach((x, i) => { rows.writeUInt32LE(i, i * 12); rows.writeDoubleLE(x, i * 12 + 4); });
    await shards.admin(0, 'INSERT INTO exact FORMAT RowBinary', rows);
    const t = await engine.query('SELECT x FROM default.exact ORDER BY i');
    expect(t.columns[0]).toEqual(xs);
    // SQL literals parse exactly too (18.16 refuses the subnormal 5e-324 and 1.7976931348623157e+308 as literals)
    const normal = xs.filter((x) => Math.abs(x) > 1e-300 && Math.abs(x) < 1e300);
    const literals = await engine.query(`SELECT ${normal.map((x, i) => `toFloat64(${x}) AS x${i}`).join(', ')}`);
    expect(literals.columns.map((c) => c[0])).toEqual(normal);
  });

  it('a remote() over both shards and a Distributed table both span the two servers', async () => {
    const one = await engine.query('SELECT count() AS n FROM default.decisions');
    const both = await engine.query(`SELECT count() AS n, sum(id) AS s FROM ${remote}`);
    const dist = await engine.query('SELECT count() AS n, sum(id) AS s FROM default.decisions_all');
    expect(one.columns[0]).toEqual([2n]);
    expect(both.columns).toEqual([[4n], [10n]]);
    expect(dist.columns).toEqual([[4n], [10n]]);
  });

  it('registers a table (with an optional filter) and counts the statements that read it', async () => {
    const all = await engine.registerTable('default', 'decisions_all');
    expect(all.columns.map((c) => c.name)).toEqual(['id', 'p', 'promotion', 'day', 'at', 'tags', 'amount']);
    expect(all.columns[1]!.type).toBe('Nullable(Float64)');
    const before = engine.sourceScans;
    const filtered = await engine.registerTable('default', 'decisions_all', "day = '2026-03-02'");
    const n = await engine.query(`SELECT count() AS n FROM ${filtered.relation}`);
    expect(n.columns[0]).toEqual([2n]);
    expect(engine.sourceScans).toBe(before + 1);
    const bad = await rejection(engine.registerTable('default', 'decisions_all', 'no_such_column > 1'));
    expect(bad.code).toBe('sql');
    expect(bad.message).toMatch(/--where.*no_such_column/);
  });

  it('names a missing table and a missing database', async () => {
    const table = await rejection(engine.registerTable('default', 'no_such_table'));
    expect(table.code).toBe('sql');
    expect(table.message).toBe(`There is no table default.no_such_table on ClickHouse at ${shards.servers[0]!.url}.`);
    const db = await rejection(engine.registerTable('nowhere', 'decisions'));
    expect(db.message).toBe(`There is no database nowhere on ClickHouse at ${shards.servers[0]!.url}.`);
    const query = await rejection(engine.query('SELECT * FROM default.no_such_table'));
    expect(query.code).toBe('sql');
    expect(query.message).toMatch(/default\.no_such_table doesn't exist/);
  });

  it('never writes: DDL and INSERT are refused by the server in read-only mode', async () => {
    const create = await rejection(engine.query('CREATE TABLE sneaky (a Int8) ENGINE = Memory'));
    expect(create.message).toMatch(/readonly/i);
    const insert = await rejection(engine.query('INSERT INTO default.decisions (id) VALUES (99)'));
    expect(insert.message).toMatch(/readonly/i);
    expect(await shards.admin(0, 'SELECT count() FROM decisions FORMAT TSV')).toBe('2\n');
  });

  it('stops an answer past the row cap or the byte cap while it streams', async () => {
    const small = await shards.connect({ maxResultRows: 1000 });
    try {
      const rows = await rejection(small.query('SELECT number FROM system.numbers LIMIT 100000'));
      expect(rows.code).toBe('too-large');
      expect(rows.message).toMatch(/more than 1,000 rows/);
      expect((await small.query('SELECT number FROM system.numbers LIMIT 1000')).rowCount).toBe(1000);
    } finally {
      await small.close();
    }
    const narrow = await shards.connect({ maxReplyBytes: 4096 });
    try {
      const bytes = await rejection(narrow.query(`SELECT '${'x'.repeat(100)}' AS s FROM system.numbers LIMIT 1000`));
      expect(bytes.code).toBe('too-large');
      expect(bytes.message).toBe('The answer is larger than 4,096 bytes, the most one answer may hold; the query was stopped.');
    } finally {
      await narrow.close();
    }
  });

  it('cancel() ends the request and kills the query on the server', async () => {
    const marker = `cw_cancel_${Date.now()}`;
    const pending = engine.query(`SELECT sleepEachRow(0.5) AS ${marker} FROM numbers(200) SETTINGS max_block_size = 1`);
    expect(await until(async () => (await runningOf(shards, marker)) === 1, 10_000)).toBe(true);
    await engine.cancel();
    const e = await rejection(pending);
    expect(e.code).toBe('cancelled');
    expect(await until(async () => (await runningOf(shards, marker)) === 0, 10_000)).toBe(true);
  });

  it('an abort signal cancels one query', async () => {
    const marker = `cw_signal_${Date.now()}`;
    const controller = new AbortController();
    const pending = engine.query(`SELECT sleepEachRow(0.5) AS ${marker} FROM numbers(200) SETTINGS max_block_size = 1`, { signal: controller.signal });
    setTimeout(() => controller.abort(), 300);
    expect((await rejection(pending)).code).toBe('cancelled');
    expect(await until(async () => (await runningOf(shards, marker)) === 0, 10_000)).toBe(true);
  });

  it('a connection lost mid-query is a clear error, and the statement is killed on the server', async () => {
    // A loopback relay in front of the first server cuts every connection that carries the statement once the
    // statement runs on the server: what the client sees when the socket is silent past the statement limit
    // or the line drops. The client sends it once more (as for a stale kept-alive socket), then gives up; the
    // KILLs carry only query ids and pass.
    const target = shards.servers[0]!.httpPort;
    const marker = `cw_cut_${Date.now()}`;
    let cuts = 0;
    const relay = createServer((inbound) => {
      const outbound = connect(target, '127.0.0.1');
      const drop = () => { inbound.destroy(); outbound.destroy(); };
      inbound.on('error', drop).on('close', drop);
      outbound.on('error', drop).on('close', drop);
      let seen = false;
      inbound.on('data', (chunk: Buffer) => {
        if (seen || !chunk.toString('utf8').includes(marker)) return;
        seen = true;
        void until(async () => (await runningOf(shards, marker)) >= 1, 10_000).then(() => { cuts++; drop(); });
      });
      inbound.pipe(outbound).pipe(inbound);
    });
    await new Promise<void>((resolve) => relay.listen(0, '127.0.0.1', resolve));
    const port = (relay.address() as AddressInfo).port;
    const relayed = await connectClickHouse({ server: `http://127.0.0.1:${port}`, credentials: { user: 'default', password: '' } });
    try {
      const e = await rejection(relayed.query(`SELECT sleepEachRow(0.5) AS ${marker} FROM numbers(200) SETTINGS max_block_size = 1`));
      expect(cuts).toBe(2);
      expect(e.code).toBe('unreachable');
      expect(e.message).toBe(`Cannot reach ClickHouse at http://127.0.0.1:${port}: the server closed the connection.`);
      // without the KILLs both statements would sleep on for 100 s
      expect(await until(async () => (await runningOf(shards, marker)) === 0, 10_000)).toBe(true);
    } finally {
      await relayed.close();
      await new Promise<void>((resolve) => { relay.close(() => resolve()); });
    }
  });

  it('a query past its time limit is stopped with a timeout error', async () => {
    const quick = await shards.connect({ timeoutMs: 1500 });
    const marker = `cw_timeout_${Date.now()}`;
    try {
      const e = await rejection(quick.query(`SELECT sleepEachRow(0.5) AS ${marker} FROM numbers(200) SETTINGS max_block_size = 1`));
      expect(['timeout']).toContain(e.code);
      expect(e.message).toMatch(/did not finish within 2 s|stopped the query/);
      expect(await until(async () => (await runningOf(shards, marker)) === 0, 10_000)).toBe(true);
    } finally {
      await quick.close();
    }
  });

  it('wrong credentials: a clear refusal that never repeats the password', async () => {
    const wrong = await rejection(shards.connect({ credentials: { user: AUDITOR.user, password: 'not-the-password' } }));
    expect(wrong.code).toBe('auth');
    expect(wrong.message).toMatch(/refused user "auditor".*Wrong password/);
    expect(wrong.message).not.toContain('not-the-password');
    const unknown = await rejection(shards.connect({ credentials: { user: 'nobody', password: 'x' } }));
    expect(unknown.code).toBe('auth');
    const right = await shards.connect({ credentials: AUDITOR });
    expect((await right.query('SELECT 1 AS one')).columns[0]).toEqual([1]);
    await right.close();
  });

  it('a refused connection names the address', async () => {
    // the stopped harness's ports are not reused here: a fresh port with nothing listening
    const { createServer } = await import('node:net');
    const port = await new Promise<number>((resolve) => { const s = createServer(); s.listen(0, '127.0.0.1', () => { const a = s.address(); s.close(() => resolve(typeof a === 'object' && a ? a.port : 0)); }); });
    const e = await rejection(connectClickHouse({ server: `http://127.0.0.1:${port}`, credentials: { user: 'default', password: '' } }));
    expect(e.code).toBe('unreachable');
    expect(e.message).toBe(`Cannot reach ClickHouse at http://127.0.0.1:${port}: the connection was refused (is the server running, and is that its HTTP port?).`);
  });
});

describe('ClickHouse network errors (no server needed)', () => {
  it.each([
    ['ECONNREFUSED', 'the connection was refused (is the server running, and is that its HTTP port?)'],
    ['ENOTFOUND', 'no such host'],
    ['ECONNRESET', 'the server closed the connection'],
  ])('%s', (code, why) => {
    const e = networkError(Object.assign(new TypeError('fetch failed'), { cause: { code } }), 'http://warehouse.invalid:8123');
    expect(e.code).toBe('unreachable');
    expect(e.message).toBe(`Cannot reach ClickHouse at http://warehouse.invalid:8123: ${why}.`);
  });
});
