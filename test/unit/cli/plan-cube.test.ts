/**
 * An exported plan run by another engine, and the audit from its results (README, "An exported plan").
 * `counterweight plan --dialect duckdb --table demo` prints the statements step by step; this test runs each
 * one in DuckDB itself (@duckdb/node-api, a table made from the demo log), exports each result with DuckDB's
 * own COPY ... TO (Parquet, and newline-delimited JSON), and audits with `audit --cube`. The reference is the
 * ordinary `counterweight audit` of the demo file: verdict, reasons, every check's status, findings and
 * metrics, and the targets' numbers. Findings from results carry no example rows (reading them needs the log).
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { DuckDBInstance, type DuckDBConnection } from '@duckdb/node-api';
import Ajv from 'ajv';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { firstDifference } from '../../core/audit-helpers.ts';
import { expectInputErrors, runCli } from './spawn.ts';

const ROOT = path.resolve('.');
const DEMO = path.join(ROOT, 'sample-data', 'maple-row-demo.parquet');
const ROLES = ['--role', 'decision_id=decision_id', '--role', 'time=logged_at', '--role', 'action=promotion', '--role', 'propensity=propensity', '--role', 'reward=ordered', '--role', 'policy_version=policy_version', '--segments', 'region,device,tenure'];
const TARGETS = ['--target', `table:${path.join(ROOT, 'sample-data', 'maple-row-v9-policy.csv')}`, '--target', 'uniform'];
const cli = (args: readonly string[]) => runCli(args, ROOT, 300_000);

interface Report { verdict: string; reasons: { check: string }[]; checks: { id: string; status: string; findings: Record<string, unknown>[]; metrics: unknown }[]; input: { rows: number; files: { path: string }[]; format: string }; roles: unknown; targets: Record<string, unknown>[]; queries: unknown; run: unknown; signoff: unknown }
const body = (r: Report) => {
  const { run: _run, signoff: _s, queries: _q, input, ...rest } = r;
  return { ...rest, rows: input.rows, checks: r.checks.map((c) => ({ ...c, findings: c.findings.map(({ examples: _e, ...f }) => f) })) };
};

/** The statements of one `plan` output, by name, with whether they are answered. */
function statements(stdout: string): { name: string; stem: string; sql: string; answered: boolean }[] {
  return stdout.split(/^-- counterweight plan: /m).slice(1).map((chunk) => {
    const [head, ...rest] = chunk.split('\n');
    const name = (head as string).replace(/ \(answered.*| -> save.*/, '');
    const stem = /save the result as [^ ]*\/([^/ ]+)\.parquet/.exec(head as string)?.[1] ?? '';
    return { name, stem, sql: (rest.join('\n').split(';\n\n')[0] as string).trim(), answered: (head as string).includes('(answered') };
  });
}

let dir = '';
let db: DuckDBInstance;
let c: DuckDBConnection;

/** Runs `plan` until every statement is answered, each result exported by DuckDB in `format`. */
async function runPlan(results: string, format: 'parquet' | 'json'): Promise<{ rounds: number; names: string[] }> {
  mkdirSync(results, { recursive: true });
  for (let round = 1; round <= 8; round++) {
    const r = cli(['plan', '--dialect', 'duckdb', '--table', 'demo', '--results', results, ...ROLES]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const list = statements(r.stdout);
    if (r.stdout.includes('every statement is answered')) return { rounds: round, names: list.map((s) => s.name) };
    for (const s of list.filter((x) => !x.answered)) {
      // DESCRIBE is not a query COPY takes; wrapped it is
      const query = s.name === 'describe' ? `SELECT * FROM (${s.sql})` : s.sql;
      await c.run(`COPY (${query}) TO '${path.join(results, `${s.stem}.${format}`)}' (FORMAT ${format})`);
    }
  }
  throw new Error('the plan did not complete in 8 rounds');
}

beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), 'cw-plan-'));
  db = await DuckDBInstance.create(':memory:', { threads: '2' });
  c = await db.connect();
  await c.run(`CREATE TABLE demo AS SELECT * FROM read_parquet('${DEMO}')`);
}, 60_000);
afterAll(() => {
  c?.closeSync();
  db?.closeSync();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

describe('plan, run elsewhere, audit --cube', () => {
  let whole: Report;
  beforeAll(() => {
    const r = cli(['audit', DEMO, ...ROLES, ...TARGETS, '--json', path.join(dir, 'whole.json'), '--quiet']);
    expect(r.stderr).toBe('');
    whole = JSON.parse(readFileSync(path.join(dir, 'whole.json'), 'utf8')) as Report;
  }, 300_000);

  for (const format of ['parquet', 'json'] as const) {
    it(`equals the audit of the log, from results exported as ${format}`, async () => {
      const results = path.join(dir, `results-${format}`);
      const { rounds, names } = await runPlan(results, format);
      // describe, then the first rows' profile, then every row's (the demo is longer than the first rows), then the
      // scans, and a fifth call that finds every result
      expect(rounds).toBe(5);
      expect(names).toEqual(['describe', 'profile (first rows)', 'profile', 'cube', 'tails', 'duplicates']);
      const r = cli(['audit', '--cube', path.join(results, `cube.${format}`), ...ROLES, ...TARGETS, '--json', path.join(dir, `cube-${format}.json`), '--quiet']);
      expect(r.stderr).toBe('');
      const cube = JSON.parse(readFileSync(path.join(dir, `cube-${format}.json`), 'utf8')) as Report;
      expect(cube.verdict).toBe(whole.verdict);
      expect(cube.input.rows).toBe(whole.input.rows);
      expect(cube.input.files.map((f) => path.basename(f.path)).sort()).toEqual(['cube', 'describe', 'duplicates', 'profile', 'profile-first-rows', 'tails'].map((s) => `${s}.${format}`).sort());
      expect(cube.checks.map((x) => [x.id, x.status, x.findings.length])).toEqual(whole.checks.map((x) => [x.id, x.status, x.findings.length]));
      expect(cube.reasons.map((x) => x.check)).toEqual(whole.reasons.map((x) => x.check));
      expect(cube.targets.length).toBeGreaterThan(1);
      expect(firstDifference(body(cube), body(whole), 1e-12)).toBeNull();
      if (format === 'json') {
        // every row DuckDB exported follows the committed schema (ajv, draft-07)
        const validate = new Ajv({ strict: false }).compile(JSON.parse(readFileSync(path.join(ROOT, 'app/core/model/cube.schema.json'), 'utf8')) as object);
        const rows = readFileSync(path.join(results, 'cube.json'), 'utf8').trim().split('\n').map((l) => JSON.parse(l) as unknown);
        expect(rows.length).toBeGreaterThan(100);
        for (const row of rows) expect(validate(row), JSON.stringify(validate.errors)).toBe(true);
      }
    }, 600_000);
  }

  it('refuses a cube of another schema version, a cube lacking columns, and missing results, clearly', async () => {
    const results = path.join(dir, 'results-parquet');
    const bad = path.join(dir, 'bad');
    mkdirSync(bad, { recursive: true });
    for (const stem of ['describe', 'profile-first-rows', 'profile', 'tails', 'duplicates']) await c.run(`COPY (SELECT * FROM read_parquet('${path.join(results, `${stem}.parquet`)}')) TO '${path.join(bad, `${stem}.parquet`)}' (FORMAT parquet)`);
    const cube = `read_parquet('${path.join(results, 'cube.parquet')}')`;
    await c.run(`COPY (SELECT 'counterweight.cube/0' AS cube_schema, * EXCLUDE (cube_schema) FROM ${cube}) TO '${path.join(bad, 'old.parquet')}' (FORMAT parquet)`);
    await c.run(`COPY (SELECT * EXCLUDE (a) FROM ${cube}) TO '${path.join(bad, 'no-action.parquet')}' (FORMAT parquet)`);
    await c.run(`COPY (SELECT * EXCLUDE (cube_schema) FROM ${cube}) TO '${path.join(bad, 'unversioned.parquet')}' (FORMAT parquet)`);
    await c.run(`COPY (SELECT * EXCLUDE (n) FROM ${cube}) TO '${path.join(bad, 'no-n.parquet')}' (FORMAT parquet)`);
    await c.run(`COPY (SELECT * EXCLUDE (c) FROM read_parquet('${path.join(results, 'tails.parquet')}')) TO '${path.join(bad, 'tails-no-c.parquet')}' (FORMAT parquet)`);
    const out = path.join(dir, 'should-not-exist.json');
    expectInputErrors((args) => cli(['audit', ...args, ...ROLES, '--json', out, '--quiet']), [
      [['--cube', path.join(bad, 'old.parquet')], 'is a cube of schema counterweight.cube/0; this counterweight reads counterweight.cube/1'],
      [['--cube', path.join(bad, 'no-action.parquet')], 'lacks the column a '],
      [['--cube', path.join(bad, 'unversioned.parquet')], 'has no cube_schema column'],
      [['--cube', path.join(bad, 'no-n.parquet')], 'cube result lacks column n'],
      [['--cube', path.join(results, 'cube.parquet'), '--tails', path.join(bad, 'tails-no-c.parquet')], 'lacks the column c '],
      [['--cube', path.join(dir, 'results-json', 'nothing.parquet')], 'no such file'],
    ]);
    // a cube alone, without the profile's results beside it
    const lone = path.join(dir, 'lone');
    mkdirSync(lone, { recursive: true });
    await c.run(`COPY (SELECT * FROM ${cube}) TO '${path.join(lone, 'cube.parquet')}' (FORMAT parquet)`);
    expectInputErrors((args) => cli(['audit', ...args, ...ROLES, '--json', out, '--quiet']), [[['--cube', path.join(lone, 'cube.parquet')], 'the results lack describe']]);
    expect(() => readFileSync(out)).toThrow();
  }, 600_000);

  it('prints the ClickHouse spelling of the first step, and needs the roles for the scans', () => {
    const r = cli(['plan', '--dialect', 'clickhouse', '--table', 'logs.decisions', ...ROLES]);
    expect(r.code).toBe(0);
    expect(statements(r.stdout).map((s) => s.name)).toEqual(['describe']);
    expect(r.stdout).toContain('`logs`.`decisions`');
    expectInputErrors(cli, [
      [['plan', '--table', 'demo'], "'plan' needs --dialect duckdb|clickhouse and --table T"],
      [['plan', '--dialect', 'duckdb', '--table', 'demo', '--results', path.join(dir, 'results-parquet')], 'an exported plan needs every role given: --role action=COLUMN'],
    ]);
  }, 120_000);
});
