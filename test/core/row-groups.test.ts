/**
 * One read of the log for the cube, the tails and the clip rows (AuditRequest.materialise): the audit keeps the
 * log's row groups in a temporary table and those statements read it. The report's numbers are the ones the
 * separate reads give (everything but `run` and the recorded queries, byte for byte); the queries say what ran.
 * The row-level identity of each statement over the groups is test/bench/scan-plans.test.ts ("over a table of
 * row groups"); here the audit as a whole, the bound that decides, and the engine's gate.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROW_GROUPS_MIN_ROWS_PER_PAIR, rowGroupsPay, runAudit } from '../../app/core/audit.ts';
import type { Report } from '../../app/core/model/report.ts';
import type { Profile } from '../../app/core/scan/profile.ts';
import { projectionOf } from '../../app/engine/audit-hooks.ts';
import { quoteLiteral } from '../../app/engine/sql-source.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { createWasmNodeEngine } from '../../app/engine/wasm-node.ts';
import type { Engine } from '../../app/engine/types.ts';
import { FIXED_NOW, SAMPLE, v9Target } from './audit-helpers.ts';

const DEMO = `${SAMPLE}maple-row-demo.parquet`;
const ROLES = { decision_id: 'decision_id', time: 'logged_at', action: 'promotion', propensity: 'propensity', reward: 'ordered', policy_version: 'policy_version', segments: ['region', 'device', 'tenure'] };
let dir = '';
const fourTimes = () => join(dir, 'four-times.parquet');
const fourTimesCsv = () => join(dir, 'four-times.csv');

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'cw-row-groups-'));
  // the demo's 125,375 rows four times over (501,500 rows): enough rows per (propensity, reward) pair for the groups
  // table (rowGroupsPay: 3,665 propensities by 2 rewards need 469,120)
  const instance = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
  const c = await instance.connect();
  const copies = [0, 1, 2, 3].map((k) => `SELECT * REPLACE (decision_id || '-${k}' AS decision_id) FROM read_parquet(${quoteLiteral(DEMO)})`);
  await c.run(`COPY (${copies.join(' UNION ALL ')}) TO ${quoteLiteral(fourTimes())} (FORMAT parquet)`);
  // the same rows as CSV, for DuckDB-Wasm (which reads Parquet only through its own decoder path)
  await c.run(`COPY (SELECT * FROM read_parquet(${quoteLiteral(fourTimes())})) TO ${quoteLiteral(fourTimesCsv())} (FORMAT csv, HEADER)`);
  c.closeSync();
  instance.closeSync();
}, 120_000);
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

async function audit(path: string, grouped: boolean, targets = [v9Target()], open: () => Promise<Engine> = () => createNativeEngine({ threads: 2 })): Promise<Report> {
  const engine = await open();
  try {
    const src = await engine.register({ kind: 'path', paths: [path] });
    const { project, materialise } = projectionOf(engine, src.relation);
    return await runAudit((sql) => engine.query(sql), { relation: src.relation, input: { files: [], format: src.format }, engine: engine.kind, now: FIXED_NOW, targets, roles: ROLES, ...(project ? { project } : {}), ...(grouped && materialise ? { materialise } : {}) });
  } finally {
    await engine.close();
  }
}

const bodyText = (r: Report) => {
  const { run: _run, signoff: _signoff, queries: _queries, ...rest } = r;
  return JSON.stringify(rest);
};

describe('the cube, tails and clip rows from one table of row groups', () => {
  it.each([
    ['the table target', [v9Target()]],
    ['the implicit targets (uniform and one always:<action> per action)', []],
  ])('give the report the separate reads give, with %s', async (_name, targets) => {
    const separate = await audit(fourTimes(), false, targets);
    const grouped = await audit(fourTimes(), true, targets);
    expect(bodyText(grouped)).toBe(bodyText(separate));
    const names = (r: Report) => r.queries.map((q) => q.name);
    expect(names(grouped)).toContain('row groups');
    expect(names(separate)).not.toContain('row groups');
    // the cube, every tail and every clip statement read the table, not the log
    const rowLevel = grouped.queries.filter((q) => q.name === 'cube' || q.name.startsWith('tail ') || q.name.startsWith('clip '));
    expect(rowLevel.length).toBeGreaterThanOrEqual(3);
    for (const q of rowLevel) {
      expect(q.scans_source).toBe(false);
      expect(q.sql).toContain('"src_1_groups"');
    }
    expect(grouped.queries.find((q) => q.name === 'row groups')?.sql).toMatch(/^CREATE TEMP TABLE "src_1_groups" AS SELECT /);
    expect(grouped.run.source_scans).toBe(separate.run.source_scans - (rowLevel.length - 1));
  }, 240_000);

  it('give the same report on DuckDB-Wasm in Node (a CSV, read once into its projection)', async () => {
    const separate = await audit(fourTimesCsv(), false, [v9Target()], () => createWasmNodeEngine());
    const grouped = await audit(fourTimesCsv(), true, [v9Target()], () => createWasmNodeEngine());
    expect(bodyText(grouped)).toBe(bodyText(separate));
    expect(grouped.queries.map((q) => q.name)).toContain('row groups');
    expect(separate.queries.map((q) => q.name)).not.toContain('row groups');
  }, 600_000);

  it('are not used for a log with too few rows per (propensity, reward) pair: the demo log as it is', async () => {
    const r = await audit(DEMO, true);
    expect(r.queries.map((q) => q.name)).not.toContain('row groups');
  }, 120_000);
});

describe('rowGroupsPay', () => {
  const profile = (rows: number, distinct: Record<string, number>): Profile => ({ rows, columns: Object.entries(distinct).map(([name, d]) => ({ name, distinct: d })) }) as unknown as Profile;
  const roles = { propensity: 'p', reward: 'r' };
  it('asks for ROW_GROUPS_MIN_ROWS_PER_PAIR rows per (propensity, reward, capped segment values) combination', () => {
    expect(ROW_GROUPS_MIN_ROWS_PER_PAIR).toBe(64);
    // the 10M-row benchmark log: 3,718 propensities, 2 rewards
    expect(rowGroupsPay(profile(10_030_000, { p: 3718, r: 2 }), roles, [])).toBe(true);
    expect(rowGroupsPay(profile(64 * 3718 * 2, { p: 3718, r: 2 }), roles, [])).toBe(true);
    expect(rowGroupsPay(profile(64 * 3718 * 2 - 1, { p: 3718, r: 2 }), roles, [])).toBe(false);
    // 9,000 propensities by 900 rewards over 10M rows: about one row a group
    expect(rowGroupsPay(profile(10_030_000, { p: 9000, r: 900 }), roles, [])).toBe(false);
    // a capped segment's values are kept uncapped in the groups
    expect(rowGroupsPay(profile(10_030_000, { p: 3718, r: 2, user: 5000 }), roles, ['user'])).toBe(false);
    // a column the profile does not know counts as unbounded
    expect(rowGroupsPay(profile(10_030_000, { p: 3718 }), roles, [])).toBe(false);
  });
});

describe('Engine.materialise (native)', () => {
  it('keeps a read statement in a temporary table named after the relation, refuses anything else when locked, and drops it on release', async () => {
    const engine = await createNativeEngine({ restrictFileAccess: true });
    try {
      const src = await engine.register({ kind: 'path', paths: [DEMO] });
      const t = await engine.materialise(src.relation, `SELECT promotion, count(*) AS nr FROM ${src.relation} GROUP BY promotion`);
      expect(t.relation).toBe('"src_1_groups"');
      expect(Number((await engine.query(`SELECT sum(nr)::DOUBLE FROM ${t.relation}`)).columns[0]?.[0])).toBeGreaterThan(1000);
      await t.release();
      await expect(engine.query(`SELECT * FROM ${t.relation}`)).rejects.toThrow();
      await expect(engine.materialise(src.relation, `SELECT 1; COPY (SELECT 1) TO '${join(dir, 'x.csv')}'`)).rejects.toThrow(/Refused/);
      await expect(engine.materialise('"src_9"', 'SELECT 1')).rejects.toThrow(/No log is registered/);
    } finally {
      await engine.close();
    }
  }, 60_000);
});
