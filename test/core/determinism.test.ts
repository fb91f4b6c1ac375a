/**
 * The report body depends on the log alone, not on how its rows reach the engine. Every sum of the cube is
 * accumulated exactly (fixed point, app/core/scan/cube.ts), so the body — everything but `run`, the
 * sign-off, and the file list and SQL text that name the source — is byte-identical across: two runs, 1, 2
 * and 8 DuckDB threads, the rows shuffled into many small row groups, the same log as CSV, the log split
 * into three part files, and DuckDB-Wasm against native DuckDB. Before exact sums, the 1M-row benchmark
 * log gave four different bodies in four runs at 1, 2, 8 and 2 threads (bench/NOTES.md).
 *
 * The roles are given, as a re-audit gives them (app/cli/reaudit.ts): role *suggestions* quote counts read
 * from the log's first rows (app/core/scan/profile.ts), so their reason texts follow the file's row order,
 * which is the one part of a report that does.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Report } from '../../app/core/model/report.ts';
import { runAudit } from '../../app/core/audit.ts';
import { quoteLiteral } from '../../app/engine/sql-source.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { createWasmNodeEngine } from '../../app/engine/wasm-node.ts';
import type { Engine } from '../../app/engine/types.ts';
import { createHash } from 'node:crypto';
import { firstDifference, FIXED_NOW, SAMPLE, v9Target } from './audit-helpers.ts';

const DEMO = `${SAMPLE}maple-row-demo.parquet`;
/** The demo's roles (sample-data/README.md). */
const DEMO_ROLES = { decision_id: 'decision_id', time: 'logged_at', action: 'promotion', propensity: 'propensity', reward: 'ordered', policy_version: 'policy_version', segments: ['region', 'device', 'tenure'] };
let dir = '';
const file = (name: string) => join(dir, name);

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'cw-determinism-'));
  const instance = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
  const c = await instance.connect();
  const shuffled = `SELECT * FROM read_parquet(${quoteLiteral(DEMO)}) ORDER BY hash(decision_id, logged_at)`;
  await c.run(`COPY (${shuffled}) TO ${quoteLiteral(file('shuffled.parquet'))} (FORMAT parquet, ROW_GROUP_SIZE 2048)`);
  await c.run(`COPY (SELECT * FROM read_parquet(${quoteLiteral(DEMO)})) TO ${quoteLiteral(file('demo.csv'))} (FORMAT csv, HEADER true)`);
  for (let part = 0; part < 3; part++) {
    await c.run(`COPY (SELECT * FROM read_parquet(${quoteLiteral(DEMO)}) WHERE hash(decision_id) % 3 = ${part}) TO ${quoteLiteral(file(`part-${part}.parquet`))} (FORMAT parquet)`);
  }
  c.closeSync();
  instance.closeSync();
}, 120_000);
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

async function audit(engine: Engine, paths: string[]): Promise<Report> {
  try {
    const src = await engine.register({ kind: 'path', paths });
    return await runAudit((sql) => engine.query(sql), { relation: src.relation, input: { files: [], format: src.format }, engine: engine.kind, now: FIXED_NOW, targets: [v9Target()], roles: DEMO_ROLES });
  } finally {
    await engine.close();
  }
}

/** The report without what names the run or the source's files and format. */
function bodyText(r: Report): string {
  const { run: _run, signoff: _signoff, queries: _queries, input, ...rest } = r;
  return JSON.stringify({ ...rest, rows: input.rows });
}

/** The body's SHA-256, after naming the first value that differs from the reference (so a failure is readable). */
let referenceText = '';
function body(r: Report): string {
  const text = bodyText(r);
  if (referenceText) expect(firstDifference(JSON.parse(text), JSON.parse(referenceText), 0)).toBeNull();
  return createHash('sha256').update(text).digest('hex');
}

describe('the report body is byte-identical however the rows arrive', () => {
  let reference = '';
  beforeAll(async () => {
    referenceText = bodyText(await audit(await createNativeEngine({ threads: 1 }), [DEMO]));
    reference = createHash('sha256').update(referenceText).digest('hex');
  }, 120_000);

  it('on a second run, and with the whole report but its run record equal', async () => {
    const a = await audit(await createNativeEngine({ threads: 2 }), [DEMO]);
    const b = await audit(await createNativeEngine({ threads: 2 }), [DEMO]);
    expect(body(a)).toBe(reference);
    expect(createHash('sha256').update(JSON.stringify({ ...a, run: null })).digest('hex')).toBe(createHash('sha256').update(JSON.stringify({ ...b, run: null })).digest('hex'));
  }, 120_000);

  it.each([1, 2, 8])('with %i DuckDB threads on the rows shuffled into small row groups', async (threads) => {
    expect(body(await audit(await createNativeEngine({ threads }), [file('shuffled.parquet')]))).toBe(reference);
  }, 120_000);

  it('on the same log as CSV', async () => {
    expect(body(await audit(await createNativeEngine({ threads: 2 }), [file('demo.csv')]))).toBe(reference);
  }, 120_000);

  it('on the log split into three part files', async () => {
    expect(body(await audit(await createNativeEngine({ threads: 2 }), [0, 1, 2].map((i) => file(`part-${i}.parquet`))))).toBe(reference);
  }, 120_000);

  it('on DuckDB-Wasm reading the CSV', async () => {
    expect(body(await audit(await createWasmNodeEngine(), [file('demo.csv')]))).toBe(reference);
  }, 240_000);
});
