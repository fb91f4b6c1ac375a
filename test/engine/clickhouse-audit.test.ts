/**
 * The audit of a table in a two-shard ClickHouse cluster equals the DuckDB audit of the same log.
 * The demo log (sample-data/maple-row-demo.parquet) is split row by row over two local servers
 * (test/engine/clickhouse-servers.ts) and audited through a Distributed table with `counterweight audit
 * clickhouse://...`; the same command audits the Parquet file with native DuckDB. The reference is that
 * DuckDB report: verdict, every check's status, summary, metrics and findings (examples included; the
 * findings' SQL is in each engine's own dialect), the segments and the targets' ESS, k̂ and estimates, to
 * 1e-12 relative. Roles are given, as a re-audit gives them: suggested roles quote counts over the log's
 * first rows, and a cluster's first rows are whichever shard answers first. system.query_log on each
 * shard names the statements that ran there.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BIN, cli, DEMO, demoOnTwoShards, env, ROLES, ROOT } from './clickhouse-demo.ts';
import { clickhouseBinary, clickhouseRequired, type LocalShards } from './clickhouse-servers.ts';

const TARGETS = ['--target', 'table:sample-data/maple-row-v9-policy.csv', '--target', 'uniform'];

const binary = clickhouseBinary();
const missing = binary.path === null ? binary.reason : null;
if (missing && !clickhouseRequired()) console.warn(`ClickHouse audit tests skipped: ${missing}`);

type Json = null | boolean | number | string | Json[] | { [k: string]: Json };

/** Differences between two reports' bodies: numbers to 1e-12 relative, everything else exactly. */
function differences(a: Json, b: Json, at = ''): string[] {
  if (typeof a === 'number' && typeof b === 'number') {
    const ok = a === b || Math.abs(a - b) <= 1e-12 * Math.max(Math.abs(a), Math.abs(b));
    return ok ? [] : [`${at}: ${a} vs ${b}`];
  }
  if (Array.isArray(a) && Array.isArray(b)) {
    if (a.length !== b.length) return [`${at}: ${a.length} vs ${b.length} entries`];
    return a.flatMap((x, i) => differences(x, b[i] as Json, `${at}[${i}]`));
  }
  if (a && b && typeof a === 'object' && typeof b === 'object' && !Array.isArray(a) && !Array.isArray(b)) {
    const keys = [...new Set([...Object.keys(a), ...Object.keys(b)])];
    return keys.flatMap((k) => (k in a && k in b ? differences(a[k] as Json, b[k] as Json, `${at}/${k}`) : [`${at}/${k}: only in ${k in a ? 'the first' : 'the second'}`]));
  }
  return a === b ? [] : [`${at}: ${JSON.stringify(a)} vs ${JSON.stringify(b)}`];
}

/** The report without what names the engine: input, the statements, the run, and each finding's SQL. */
function body(report: Record<string, Json>): Json {
  const { input: _i, queries: _q, run: _r, signoff: _s, ...rest } = report;
  const checks = (rest.checks as { findings: Record<string, Json>[] }[]).map((c) => ({ ...c, findings: c.findings.map(({ sql: _sql, ...f }) => f) }));
  return { ...rest, checks } as Json;
}

async function freePort(): Promise<number> {
  return new Promise((resolve) => { const s = createServer(); s.listen(0, '127.0.0.1', () => { const a = s.address(); s.close(() => resolve(typeof a === 'object' && a ? a.port : 0)); }); });
}

describe.skipIf(missing !== null && !clickhouseRequired())('audit of a table on two ClickHouse shards', () => {
  let shards: LocalShards;
  let address: string;
  const out = mkdtempSync(path.join(tmpdir(), 'cw-clickhouse-audit-'));
  const outputs = () => readdirSync(out);

  beforeAll(async () => {
    if (missing) throw new Error(`the ClickHouse tests must run here: ${missing}`);
    const demo = await demoOnTwoShards();
    ({ shards, address } = demo);
    expect(demo.sizes).toEqual([62688, 62687]);
  }, 180_000);

  afterAll(async () => {
    await shards?.stop();
    rmSync(out, { recursive: true, force: true });
  }, 60_000);

  it('equals the DuckDB audit of the same log, and its statements ran on both shards', async () => {
    const duck = cli(['audit', DEMO, ...ROLES, ...TARGETS, '--json', path.join(out, 'duckdb.json'), '--quiet']);
    expect(duck.stderr).toBe('');
    const ch = cli(['audit', address, ...ROLES, ...TARGETS, '--json', path.join(out, 'clickhouse.json'), '--html', path.join(out, 'clickhouse.html'), '--quiet']);
    expect(ch.stderr).toBe('');
    expect(ch.code).toBe(duck.code);
    const a = JSON.parse(readFileSync(path.join(out, 'duckdb.json'), 'utf8')) as Record<string, Json>;
    const b = JSON.parse(readFileSync(path.join(out, 'clickhouse.json'), 'utf8')) as Record<string, Json>;
    expect(b.verdict).toBe(a.verdict);
    expect(differences(body(a), body(b))).toEqual([]);
    expect(readFileSync(path.join(out, 'clickhouse.html'), 'utf8')).toContain('<html');

    const input = b.input as { files: Json[]; format: string; rows: number; table: Record<string, Json> };
    expect(input.files).toEqual([]);
    expect(input.rows).toBe(125_375);
    expect(input.table).toMatchObject({ engine: 'clickhouse', server: shards.servers[0]!.url, database: 'default', table: 'demo_all', where: null });
    expect(input.table.server_version).toMatch(/^\d+\.\d+/);
    expect((input.table.fingerprint as { rows: number }).rows).toBe(125_375);
    expect(JSON.stringify(b)).not.toContain('PASSWORD');

    // every statement of ours that read the table reached the second shard as a query of its own
    const ours = (b.queries as { name: string; sql: string; scans_source: boolean }[]).filter((q) => q.scans_source);
    for (const s of [0, 1]) await shards.admin(s, 'SYSTEM FLUSH LOGS');
    const initial = await shards.admin(0, "SELECT query_id FROM system.query_log WHERE type = 2 AND is_initial_query = 1 AND query_id LIKE 'counterweight-%' FORMAT TSV");
    const onShard = await shards.admin(1, "SELECT initial_query_id, substring(query, 1, 60) FROM system.query_log WHERE type = 2 AND is_initial_query = 0 AND initial_query_id LIKE 'counterweight-%' FORMAT TSV");
    const ids = new Set(initial.trim().split('\n'));
    const reached = new Set(onShard.trim().split('\n').map((l) => l.split('\t')[0]));
    console.log(`ClickHouse audit: ${ours.length} statements read demo_all (${ours.map((q) => q.name).join(', ')}); shard 2 ran ${onShard.trim().split('\n').length} sub-queries for ${[...reached].filter((id) => ids.has(id as string)).length} of them`);
    expect([...reached].filter((id) => ids.has(id as string)).length).toBeGreaterThanOrEqual(ours.length);
  }, 900_000);

  it('a filter (--where) audits the rows it picks and is recorded', () => {
    const r = cli(['audit', address, ...ROLES, '--where', "logged_at < toDateTime('2026-03-17 00:00:00')", '--json', path.join(out, 'where.json'), '--quiet']);
    expect(r.stderr).toBe('');
    const report = JSON.parse(readFileSync(path.join(out, 'where.json'), 'utf8')) as { input: { rows: number; table: { where: string } } };
    // v7 ran days 1-15 of the demo (sample-data/README.md); the count is the file's own
    expect(report.input.table.where).toBe("logged_at < toDateTime('2026-03-17 00:00:00')");
    expect(report.input.rows).toBeGreaterThan(50_000);
    expect(report.input.rows).toBeLessThan(125_375);
  }, 600_000);

  describe('clear errors, and no report written', () => {
    const cases: readonly [string, () => Promise<string[]>, RegExp][] = [
      ['a bad host', async () => ['clickhouse://no-such-host.invalid:8123/default.demo_all'], /Cannot reach ClickHouse at http:\/\/no-such-host\.invalid:8123: no such host/],
      ['a refused connection', async () => [`clickhouse://127.0.0.1:${await freePort()}/default.demo_all`], /Cannot reach ClickHouse at .*: the connection was refused/],
      ['a missing table', async () => [address.replace('demo_all', 'no_such_log')], /There is no table default\.no_such_log on ClickHouse/],
      ['a password in the address', async () => [address.replace('127.0.0.1', 'default:secret@127.0.0.1')], /must not carry a user or password/],
    ];
    it.each(cases)('%s', async (_name, source, message) => {
      const before = outputs();
      const r = cli(['audit', ...(await source()), ...ROLES, '--json', path.join(out, 'error.json'), '--html', path.join(out, 'error.html'), '--quiet']);
      expect(r.code).toBe(3);
      expect(r.stderr).toMatch(message);
      expect(outputs()).toEqual(before);
    }, 120_000);

    it('a role column of the wrong type: the schema check fails and says why', () => {
      const r = cli(['audit', address, '--role', 'action=promotion', '--role', 'propensity=region', '--role', 'reward=ordered', '--json', path.join(out, 'wrong-type.json'), '--quiet']);
      expect(r.code).toBe(2);
      const report = JSON.parse(readFileSync(path.join(out, 'wrong-type.json'), 'utf8')) as { verdict: string; checks: { id: string; status: string; summary: string }[] };
      expect(report.verdict).toBe('not-supported');
      expect(report.checks[0]).toMatchObject({ id: 'schema.roles', status: 'fail' });
      expect(report.checks[0]!.summary).toMatch(/propensity column 'region' is VARCHAR/);
      rmSync(path.join(out, 'wrong-type.json'));
    }, 300_000);

    it('a cancelled audit stops its statement on the server and writes nothing', async () => {
      const before = outputs();
      const child = spawn(process.execPath, [BIN, 'audit', address, ...ROLES, '--json', path.join(out, 'cancelled.json'), '--html', path.join(out, 'cancelled.html'), '--quiet'], { cwd: ROOT, env });
      let stderr = '';
      child.stderr.on('data', (b: Buffer) => { stderr += b.toString(); });
      const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
      // interrupted while the cube (the statement with the limb sums) runs on the servers
      const deadline = Date.now() + 240_000;
      for (;;) {
        const n = await shards.admin(0, "SELECT count() FROM system.processes WHERE query LIKE '%cw_t%' AND query NOT LIKE '%system.processes%' FORMAT TSV");
        if (Number(n.trim()) > 0 || Date.now() > deadline) break;
        await new Promise((r) => setTimeout(r, 100));
      }
      child.kill('SIGINT');
      expect(await exited).toBe(130);
      expect(stderr).toMatch(/interrupted/);
      expect(outputs()).toEqual(before);
      const end = Date.now() + 20_000;
      let running = 1;
      while (running > 0 && Date.now() < end) {
        running = Number((await shards.admin(0, "SELECT count() FROM system.processes WHERE query LIKE '%cw_t%' AND query NOT LIKE '%system.processes%' FORMAT TSV")).trim());
        if (running > 0) await new Promise((r) => setTimeout(r, 200));
      }
      expect(running).toBe(0);
    }, 300_000);
  });
});

