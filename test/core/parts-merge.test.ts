/**
 * An audit merged from parts (app/core/parts/merge.ts) against the audit of the whole log: the demo log split
 * into one Parquet file per day, each day read once into a parts folder, the merged audit made from the stored
 * scans alone (the day files are removed first, so nothing can read them again). The reference is the same
 * audit of the whole file by DuckDB (runAudit), and the duplicate count is checked against DuckDB's own exact
 * GROUP BY over every id.
 *
 * The report body (everything but run, sign-off, queries and the input's file list) is byte-identical: each part
 * keeps its rows grouped by (cell keys, p, r) with their counts, and the merged cube is formed from them with the
 * cube query's own fixed-point arithmetic at the whole log's scales (app/core/parts/replay.ts): its sums are sums
 * of integers, so they do not depend on how the log was cut. What differs: findings carry no example rows (they
 * would need the rows; their `sql` still says how to list them), which the comparison leaves out.
 */
import { copyFileSync, cpSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import * as core from '../../app/core/audit.ts';
import type { Report } from '../../app/core/model/report.ts';
import { duplicatesOf, type PartIds } from '../../app/core/parts/merge.ts';
import { scanPart } from '../../app/core/parts/scan.ts';
import { auditParts, rangeSoFar, readMerged, stateFor, storePart, type PartsState } from '../../app/cli/parts.ts';
import { cubeFromMerged } from '../../app/core/parts/merged.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { quoteLiteral } from '../../app/engine/sql-source.ts';
import { fingerprintFiles } from '../../app/report/fingerprint.ts';
import { auditFile, firstDifference, FIXED_NOW, SAMPLE, v9Target } from './audit-helpers.ts';

const DEMO = `${SAMPLE}maple-row-demo.parquet`;
const DEMO_ROLES = { decision_id: 'decision_id', time: 'logged_at', action: 'promotion', propensity: 'propensity', reward: 'ordered', policy_version: 'policy_version', segments: ['region', 'device', 'tenure'] };
let dir = '';
let days: string[] = [];

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'cw-parts-'));
  const instance = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
  const c = await instance.connect();
  const list = await c.runAndReadAll(`SELECT DISTINCT strftime(logged_at, '%Y-%m-%d') FROM read_parquet(${quoteLiteral(DEMO)}) ORDER BY 1`);
  days = list.getRows().map((r) => String(r[0]));
  for (const d of days) await c.run(`COPY (SELECT * FROM read_parquet(${quoteLiteral(DEMO)}) WHERE strftime(logged_at, '%Y-%m-%d') = '${d}') TO ${quoteLiteral(join(dir, `day-${d}.parquet`))} (FORMAT parquet)`);
  c.closeSync();
  instance.closeSync();
}, 120_000);
afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

/** Reads one file into a parts folder, as `audit --add-part` does. */
async function addPart(stateDir: string, state: PartsState, file: string): Promise<PartsState> {
  const engine = await createNativeEngine({ threads: 2 });
  try {
    const src = await engine.register({ kind: 'path', paths: [file] });
    const [fp] = await fingerprintFiles([file]);
    return storePart(stateDir, state, fp!, await scanPart((sql) => engine.query(sql), src.relation, state.roles, state.settings, rangeSoFar(state)));
  } finally {
    await engine.close();
  }
}

const withoutExamples = (r: Report) => ({ ...r, checks: r.checks.map((c) => ({ ...c, findings: c.findings.map(({ examples: _e, ...f }) => f) })) });
const body = (r: Report) => {
  const { run: _run, signoff: _s, queries: _q, input, ...rest } = withoutExamples(r);
  return { ...rest, rows: input.rows };
};

describe('an audit merged from daily parts equals the audit of the whole log', () => {
  let whole: Report;
  let merged: Report;
  let mergedAsked: Report;
  let fromParts: Report;
  let finalState: PartsState;
  // the folder right after the first day whose rows moved the cube's scales after day 1 (its entries formed again from every part)
  let rebuilt: { state: PartsState; dir: string; days: number } | null = null;
  beforeAll(async () => {
    const engine = await createNativeEngine({ threads: 2 });
    try {
      whole = await auditFile(engine, DEMO, { targets: [v9Target()], roles: DEMO_ROLES });
    } finally {
      await engine.close();
    }
    let state = stateFor(join(dir, 'state'), { roles: DEMO_ROLES, targets: [v9Target()], settings: undefined, format: 'parquet' });
    for (const d of days) {
      // each day is read from a copy that is removed at once: the merged audit cannot read any day again
      const copy = join(dir, `reading-${d}.parquet`);
      copyFileSync(join(dir, `day-${d}.parquet`), copy);
      state = await addPart(join(dir, 'state'), state, copy);
      rmSync(copy);
      const m = readMerged(join(dir, 'state'), state);
      if (!rebuilt && m && m.rebuiltAt.length > 1 && m.rebuiltAt[m.rebuiltAt.length - 1] === state.parts.length) {
        rebuilt = { state, dir: join(dir, 'rebuilt'), days: state.parts.length };
        cpSync(join(dir, 'state'), rebuilt.dir, { recursive: true });
      }
    }
    finalState = state;
    merged = (await auditParts(core, join(dir, 'state'), state)).report;
    fromParts = (await auditParts(core, join(dir, 'state'), state, undefined, undefined, false)).report;
    mergedAsked = (await auditParts(core, join(dir, 'state'), state, undefined, { cwd: process.cwd(), open: () => createNativeEngine({ threads: 2 }) })).report;
  }, 300_000);

  it('with part examples asked for but the day files gone, lists no example rows rather than some (the rest as without)', () => {
    expect(whole.checks.some((c) => c.findings.some((f) => f.examples?.length))).toBe(true);
    expect(mergedAsked.checks.some((c) => c.findings.some((f) => f.examples !== undefined))).toBe(false);
    expect(JSON.stringify(body(mergedAsked))).toBe(JSON.stringify(body(whole)));
  });

  it('splits the demo into its 30 days', () => {
    expect(days).toHaveLength(30);
    expect(readdirSync(join(dir, 'state')).filter((f) => f.endsWith('.part.json'))).toHaveLength(30);
  });

  it('gives the same verdict, reasons, statuses, findings and row counts', () => {
    expect(merged.verdict).toBe(whole.verdict);
    expect(merged.input.rows).toBe(whole.input.rows);
    expect(merged.checks.map((c) => [c.id, c.status, c.findings.length])).toEqual(whole.checks.map((c) => [c.id, c.status, c.findings.length]));
    expect(merged.reasons.map((r) => r.check)).toEqual(whole.reasons.map((r) => r.check));
    expect(merged.roles).toEqual(whole.roles);
  });

  it('gives a byte-identical report body (examples aside), and every count exactly', () => {
    expect(firstDifference(body(merged), body(whole), 0)).toBeNull();
    expect(JSON.stringify(body(merged))).toBe(JSON.stringify(body(whole)));
    for (const id of ['identity.duplicates', 'propensity.range', 'time.coverage', 'reward.validity']) {
      expect(merged.checks.find((c) => c.id === id)?.metrics).toEqual(whole.checks.find((c) => c.id === id)?.metrics);
    }
    expect(merged.targets.map((t) => t.max_weight)).toEqual(whole.targets.map((t) => t.max_weight));
  });

  it('reads the merged state, not the parts: its cube is the whole log\'s, and equals the replay of every part', () => {
    const m = readMerged(join(dir, 'state'), finalState);
    expect(m?.cube).toBeTruthy();
    expect(JSON.stringify(body(fromParts))).toBe(JSON.stringify(body(merged)));
    // the merged cube is used, not the fallback: it gives cells for the audit's own spec
    const reward = { shift: 0.5, halfRange: 0.5 };
    expect(m?.cube && cubeFromMerged(m.cube, null, { reward, floor: 0.01, byPropensity: true, rowCount: merged.input.rows }, [], 50)).not.toBeNull();
    // the demo's rows cross powers of two as days are added: the entries were formed again several times, not every day
    expect(m?.rebuiltAt.length).toBeGreaterThan(1);
    expect(m?.rebuiltAt.length).toBeLessThan(days.length);
  });

  it('after a day that moved the cube\'s scales, the merged audit equals the audit of those days as one log', async () => {
    expect(rebuilt).not.toBeNull();
    const r = rebuilt as unknown as { state: PartsState; dir: string; days: number };
    const part = (await auditParts(core, r.dir, r.state)).report;
    const engine = await createNativeEngine({ threads: 2 });
    let sofar: Report;
    try {
      const src = await engine.register({ kind: 'path', paths: days.slice(0, r.days).map((d) => join(dir, `day-${d}.parquet`)) });
      sofar = await core.runAudit((sql) => engine.query(sql), { relation: src.relation, input: { files: [], format: src.format }, engine: engine.kind, now: FIXED_NOW, targets: [v9Target()], roles: DEMO_ROLES });
    } finally {
      await engine.close();
    }
    expect(part.input.rows).toBe(sofar.input.rows);
    expect(firstDifference(body(part), body(sofar), 0)).toBeNull();
    expect(JSON.stringify(body(part))).toBe(JSON.stringify(body(sofar)));
  }, 120_000);

  it('counts duplicated ids as DuckDB grouping every id does', async () => {
    const [ids, rows] = await exactDuplicates(DEMO);
    const m = merged.checks.find((x) => x.id === 'identity.duplicates')?.metrics as Record<string, number>;
    expect([m.duplicated_ids, m.rows_in_duplicates]).toEqual([ids, rows]);
    expect(ids).toBeGreaterThan(0);
  });
});

/** DuckDB's exact count of ids held by more than one row, and their rows. */
async function exactDuplicates(file: string): Promise<number[]> {
  const instance = await DuckDBInstance.create(':memory:');
  const c = await instance.connect();
  const r = await c.runAndReadAll(`SELECT count(*)::DOUBLE, sum(n)::DOUBLE FROM (SELECT decision_id, count(*) AS n FROM read_parquet(${quoteLiteral(file)}) GROUP BY 1 HAVING count(*) > 1)`);
  c.closeSync();
  instance.closeSync();
  return r.getRows()[0] as number[];
}

describe('copies of one id in different parts', () => {
  it('are found by their shared hash and counted exactly (alternate rows in two parts)', async () => {
    const instance = await DuckDBInstance.create(':memory:');
    const c = await instance.connect();
    const halves = [0, 1].map((i) => join(dir, `half-${i}.parquet`));
    // the demo's copies of an id are whole rows written again: alternate rows go to alternate halves
    const rows = `read_parquet(${quoteLiteral(DEMO)}, file_row_number = true)`;
    for (const [i, f] of halves.entries()) await c.run(`COPY (SELECT * EXCLUDE (file_row_number) FROM ${rows} WHERE file_row_number % 2 = ${i}) TO ${quoteLiteral(f)} (FORMAT parquet)`);
    const across = await c.runAndReadAll(`SELECT count(*)::DOUBLE FROM (SELECT decision_id FROM ${rows} GROUP BY 1 HAVING count(DISTINCT file_row_number % 2) > 1)`);
    c.closeSync();
    instance.closeSync();
    expect(Number(across.getRows()[0]?.[0])).toBeGreaterThan(0);
    const stateDir = join(dir, 'halves');
    let state = stateFor(stateDir, { roles: DEMO_ROLES, targets: [v9Target()], settings: undefined, format: 'parquet' });
    for (const f of halves) state = await addPart(stateDir, state, f);
    const report = (await auditParts(core, stateDir, state)).report;
    const m = report.checks.find((x) => x.id === 'identity.duplicates')?.metrics as Record<string, number>;
    expect([m.duplicated_ids, m.rows_in_duplicates]).toEqual(await exactDuplicates(DEMO));
    // the part files are still there: the findings' example rows read from them equal the whole log's audit's
    const withExamples = (await auditParts(core, stateDir, state, undefined, { cwd: process.cwd(), open: () => createNativeEngine({ threads: 2 }) })).report;
    const engine = await createNativeEngine({ threads: 2 });
    let whole: Report;
    try {
      whole = await auditFile(engine, DEMO, { targets: [v9Target()], roles: DEMO_ROLES });
    } finally {
      await engine.close();
    }
    const examples = (r: Report) => r.checks.map((c) => c.findings.map((f) => f.examples ?? null));
    expect(examples(whole).flat().filter((e) => e?.length).length).toBeGreaterThan(0);
    expect(JSON.stringify(examples(withExamples))).toBe(JSON.stringify(examples(whole)));
    expect(withExamples.queries.some((q) => q.name === 'examples')).toBe(true);
  }, 240_000);
});

describe('duplicate ids across parts are confirmed exactly', () => {
  const part = (entries: [bigint, string, number][]): PartIds => {
    const hashes = [...new Set(entries.map((e) => e[0]))].sort((a, b) => (a < b ? -1 : 1));
    return {
      hashes: BigUint64Array.from(hashes),
      repeated: new Map(entries.filter((e) => e[2] > 1).map((e) => [e[1], e[2]])),
      idsAt: (i) => entries.filter((e) => e[0] === hashes[i]).map((e) => [e[1], e[2]] as const),
    };
  };
  it('a hash shared by two different ids (a collision) is not a duplicate; one id in two parts is', () => {
    const a = part([[1n, 'x', 1], [7n, 'same', 1], [9n, 'twice', 2]]);
    const b = part([[1n, 'y', 1], [7n, 'same', 3], [8n, 'z', 1]]);
    const d = duplicatesOf([a, b], 5);
    expect(d).toEqual({ ids: 2, rowsInDuplicates: 6, extraRows: 4, maxCopies: 4, exampleIds: ['same', 'twice'] });
  });
});

describe('a failed add leaves the parts folder as it was', () => {
  it('when parts.json cannot be written, the new part\'s files and merged state are removed, and the add can be made again', async () => {
    const stateDir = join(dir, 'failing');
    let state = stateFor(stateDir, { roles: DEMO_ROLES, targets: [v9Target()], settings: undefined, format: 'parquet' });
    state = await addPart(stateDir, state, join(dir, `day-${days[0]}.parquet`));
    const snapshot = () => Object.fromEntries(readdirSync(stateDir).sort().map((f) => [f, readFileSync(join(stateDir, f)).toString('base64')]));
    const before = snapshot();
    // a folder where parts.json's temporary file would go: its write fails after every other file was written
    const blocker = join(stateDir, `parts.json.${process.pid}.partial`);
    mkdirSync(blocker);
    await expect(addPart(stateDir, state, join(dir, `day-${days[1]}.parquet`))).rejects.toThrow(/EISDIR|directory/i);
    rmSync(blocker, { recursive: true });
    expect(snapshot()).toEqual(before);
    const again = await addPart(stateDir, state, join(dir, `day-${days[1]}.parquet`));
    expect(again.parts.map((p) => p.name)).toEqual([`day-${days[0]}.parquet`, `day-${days[1]}.parquet`]);
    expect(readdirSync(stateDir).filter((f) => f.startsWith('merged-'))).toEqual([again.merged]);
  }, 120_000);
});
