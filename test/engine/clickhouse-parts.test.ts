/**
 * An audit merged from parts read off a ClickHouse table, one day at a time, equals the DuckDB audit of the
 * whole log. The demo log (sample-data/maple-row-demo.parquet) is split row by row over two local servers
 * (test/engine/clickhouse-servers.ts) behind a Distributed table; each of its days is added with
 * `counterweight audit --parts DIR --add-part clickhouse://.../default.demo_all --where "<that day>"`, so every
 * part's statements run on both shards in the ClickHouse dialect (app/core/parts/scan.ts). The reference is the
 * native DuckDB audit of the Parquet file: verdict, reasons, statuses, findings and counts exactly, every other
 * number to 1e-12 relative (as test/core/parts-merge.test.ts holds DuckDB's own parts to it); findings of a
 * merged audit carry no example rows.
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cli, DEMO, demoOnTwoShards, ROLES } from './clickhouse-demo.ts';
import { clickhouseBinary, clickhouseRequired, type LocalShards } from './clickhouse-servers.ts';
import { firstDifference } from '../core/audit-helpers.ts';

const TARGETS = ['--target', 'table:sample-data/maple-row-v9-policy.csv'];

const binary = clickhouseBinary();
const missing = binary.path === null ? binary.reason : null;
if (missing && !clickhouseRequired()) console.warn(`ClickHouse parts tests skipped: ${missing}`);

interface Report { verdict: string; reasons: { check: string }[]; checks: { id: string; status: string; findings: Record<string, unknown>[]; metrics: unknown }[]; input: { rows: number; files: { path: string }[] }; roles: unknown; targets: { max_weight: number }[]; queries: unknown; run: unknown; signoff: unknown }
const withoutExamples = (r: Report) => ({ ...r, checks: r.checks.map((c) => ({ ...c, findings: c.findings.map(({ examples: _e, sql: _s, ...f }) => f) })) });
const body = (r: Report) => {
  const { run: _run, signoff: _s, queries: _q, input, ...rest } = withoutExamples(r);
  return { ...rest, rows: input.rows };
};

describe.skipIf(missing !== null && !clickhouseRequired())('an audit merged from daily parts of a two-shard ClickHouse table', () => {
  let shards: LocalShards;
  let address: string;
  let days: string[] = [];
  const out = mkdtempSync(path.join(tmpdir(), 'cw-clickhouse-parts-'));

  beforeAll(async () => {
    if (missing) throw new Error(`the ClickHouse tests must run here: ${missing}`);
    ({ shards, address } = await demoOnTwoShards(async (engine) => {
      const list = await engine.query(`SELECT DISTINCT strftime(logged_at, '%Y-%m-%d') AS d FROM read_parquet('${path.resolve(DEMO)}') ORDER BY 1`);
      days = (list.columns[0] as unknown[]).map(String);
    }));
  }, 180_000);

  afterAll(async () => {
    await shards?.stop();
    rmSync(out, { recursive: true, force: true });
  }, 60_000);

  it('equals the DuckDB audit of the whole log, every day read from the servers', () => {
    expect(days).toHaveLength(30);
    const duck = cli(['audit', DEMO, ...ROLES, ...TARGETS, '--json', path.join(out, 'whole.json'), '--quiet']);
    expect(duck.stderr).toBe('');
    const dir = path.join(out, 'parts');
    const started = Date.now();
    for (const [i, day] of days.entries()) {
      // the day's rows on both shards: toDate() of the logged time, as a production table is partitioned
      const r = cli(['audit', '--parts', dir, '--add-part', address, '--where', `toDate(logged_at) = toDate('${day}')`, ...(i === 0 ? [...ROLES, ...TARGETS] : []), '--json', path.join(out, 'merged.json'), '--quiet']);
      expect(r.stderr).toBe('');
      expect(r.code).toBe(duck.code);
    }
    console.log(`30 ClickHouse day parts added and merged in ${((Date.now() - started) / 1000).toFixed(1)} s`);
    expect(readdirSync(dir).filter((f) => f.endsWith('.part.json'))).toHaveLength(30);
    const whole = JSON.parse(readFileSync(path.join(out, 'whole.json'), 'utf8')) as Report;
    const merged = JSON.parse(readFileSync(path.join(out, 'merged.json'), 'utf8')) as Report;
    expect(merged.verdict).toBe(whole.verdict);
    expect(merged.input.rows).toBe(125_375);
    expect(merged.input.files).toHaveLength(30);
    expect(merged.input.files[0]!.path).toContain('default.demo_all?where=');
    expect(merged.checks.map((c) => [c.id, c.status, c.findings.length])).toEqual(whole.checks.map((c) => [c.id, c.status, c.findings.length]));
    expect(merged.reasons.map((r) => r.check)).toEqual(whole.reasons.map((r) => r.check));
    expect(merged.roles).toEqual(whole.roles);
    expect(firstDifference(body(merged), body(whole), 1e-12)).toBeNull();
    for (const id of ['identity.duplicates', 'propensity.range', 'time.coverage', 'reward.validity']) {
      expect(merged.checks.find((c) => c.id === id)?.metrics).toEqual(whole.checks.find((c) => c.id === id)?.metrics);
    }
    expect(merged.targets.map((t) => t.max_weight)).toEqual(whole.targets.map((t) => t.max_weight));
  }, 1_800_000);

  it('refuses --where without a ClickHouse part, and the same day twice', () => {
    const a = cli(['audit', '--parts', path.join(out, 'other'), '--add-part', DEMO, '--where', '1 = 1', ...ROLES, '--quiet']);
    expect(a.code).toBe(3);
    expect(a.stderr).toMatch(/--where filters a table in a server/);
    const b = cli(['audit', '--parts', path.join(out, 'parts'), '--add-part', address, '--where', `toDate(logged_at) = toDate('${days[0]}')`, '--quiet']);
    expect(b.code).toBe(3);
    expect(b.stderr).toMatch(/is already in/);
  }, 600_000);
});
