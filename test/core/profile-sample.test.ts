/**
 * The profile's sample (app/core/scan/profile.ts sampleSql) is a set of rows fixed by their values: the
 * PREFIX_ROWS rows of least MD5 (RFC 1321) of their hash text. Reference: node:crypto's MD5 over the same
 * text, computed here row by row. Then the property the sample is for: the same rows in another order, or
 * split into two files, give the same profile, the same role evidence (every row; sums to 1e-12 relative,
 * their order of addition differs) and the same schema.roles status and findings. The log is the demo twice
 * (250,750 rows, over PREFIX_ROWS): copy after copy, each row twice in a row, and shuffled. Its first 100,000
 * rows alone tell two stories (asserted below), as the first rows of a bench log once did: one copy nearly
 * unique, two copies half unique.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inspectRoles, runAudit } from '../../app/core/audit.ts';
import type { Report } from '../../app/core/model/report.ts';
import { PREFIX_ROWS, profileLog } from '../../app/core/scan/profile.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';
import { FIXED_NOW, firstDifference, SAMPLE } from './audit-helpers.ts';

const DEMO = `${SAMPLE}maple-row-demo.parquet`;
const dir = mkdtempSync(join(tmpdir(), 'cw-sample-'));
const file = (name: string) => join(dir, `${name}.parquet`);
const ROLES = { decision_id: 'decision_id', time: 'logged_at', action: 'promotion', propensity: 'propensity', reward: 'ordered', policy_version: 'policy_version', segments: ['region', 'device', 'tenure'] };

let engine: NativeEngine;
beforeAll(async () => {
  engine = await createNativeEngine();
  const twice = `SELECT d.*, k FROM read_parquet('${DEMO}', file_row_number = true) AS d, range(2) AS c(k)`;
  // written by one thread, so each file's row order is the ORDER BY's
  await engine.query('SET threads = 1');
  await engine.query(`COPY (SELECT * EXCLUDE (file_row_number, k) FROM (${twice}) ORDER BY k, file_row_number) TO '${file('copies')}' (FORMAT parquet)`);
  await engine.query(`COPY (SELECT * EXCLUDE (file_row_number, k) FROM (${twice}) ORDER BY file_row_number, k) TO '${file('rows')}' (FORMAT parquet)`);
  await engine.query(`COPY (SELECT * EXCLUDE (file_row_number, k) FROM (${twice}) ORDER BY hash(file_row_number * 7 + k)) TO '${file('shuffled')}' (FORMAT parquet)`);
  // the shuffled rows in two files, given second half first
  await engine.query(`COPY (SELECT * EXCLUDE (file_row_number) FROM read_parquet('${file('shuffled')}', file_row_number = true) WHERE file_row_number >= 125375) TO '${file('half-b')}' (FORMAT parquet)`);
  await engine.query(`COPY (SELECT * EXCLUDE (file_row_number) FROM read_parquet('${file('shuffled')}', file_row_number = true) WHERE file_row_number < 125375) TO '${file('half-a')}' (FORMAT parquet)`);
  await engine.query('RESET threads');
}, 120_000);
afterAll(async () => {
  await engine?.close();
  rmSync(dir, { recursive: true, force: true });
});

const relationOf = async (...paths: string[]) => (await engine.register({ kind: 'path', paths })).relation;

describe('the profile sample', () => {
  it('is the rows of least MD5 of their hash text: text as it is, integers as integers, times as whole seconds', async () => {
    const t = await engine.query(`SELECT decision_id, epoch_us(logged_at) AS us, region, device, tenure, promotion, ordered, policy_version FROM read_parquet('${DEMO}')`);
    const cell = (j: number, i: number) => t.columns[j]?.[i];
    const hashes: { md5: string; id: unknown }[] = [];
    for (let i = 0; i < t.rowCount; i++) {
      // the demo's hashed columns in their order; propensity and basket_value (DOUBLE) only break ties
      const parts = [cell(0, i), cell(1, i) === null ? null : Math.floor(Number(cell(1, i)) / 1e6), cell(2, i), cell(3, i), cell(4, i), cell(5, i), cell(6, i), cell(7, i)];
      hashes.push({ md5: createHash('md5').update(parts.map((p) => `${p === null ? '' : String(p)}|`).join('')).digest('hex'), id: cell(0, i) });
    }
    hashes.sort((a, b) => (a.md5 < b.md5 ? -1 : a.md5 > b.md5 ? 1 : 0));
    // no tie at the cut, so the ties' order does not enter this reference
    expect(hashes[PREFIX_ROWS - 1]?.md5).not.toBe(hashes[PREFIX_ROWS]?.md5);
    const expected = new Set(hashes.slice(0, PREFIX_ROWS).map((h) => h.id)).size;
    const profile = await profileLog((sql) => engine.query(sql), await relationOf(DEMO));
    expect(profile.columns.find((c) => c.name === 'decision_id')).toMatchObject({ distinct: expected, distinctBasis: 'sample', distinctRows: PREFIX_ROWS });
    // not the file's first rows (a different count there)
    const first = await engine.query(`SELECT count(DISTINCT decision_id)::DOUBLE FROM read_parquet('${DEMO}', file_row_number = true) WHERE file_row_number < ${PREFIX_ROWS}`);
    expect(Number(first.columns[0]?.[0])).not.toBe(expected);
  });

  it('gives the same profile, role evidence and suggestions for the same rows in any order or split into two files', async () => {
    // the first 100,000 rows of two layouts disagree on how unique the id is: a first-rows screen would too
    const firstShare = async (name: string) => Number((await engine.query(`SELECT (count(DISTINCT decision_id) / count(*))::DOUBLE FROM read_parquet('${file(name)}', file_row_number = true) WHERE file_row_number < ${PREFIX_ROWS}`)).columns[0]?.[0]);
    expect(await firstShare('copies')).toBeGreaterThan(0.9);
    expect(await firstShare('rows')).toBeLessThan(0.55);
    const run = (sql: string) => engine.query(sql);
    const layouts = [[file('copies')], [file('rows')], [file('shuffled')], [file('half-b'), file('half-a')]];
    const seen = [];
    for (const paths of layouts) seen.push(await inspectRoles(run, await relationOf(...paths)));
    const [ref, ...others] = seen;
    expect(ref!.profile.rows).toBe(250750);
    expect(ref!.evidence.rowsRead).toBe(250750);
    for (const o of others) {
      expect(o.profile).toEqual(ref!.profile);
      expect(firstDifference(o.evidence, ref!.evidence, 1e-12)).toBeNull();
      expect(firstDifference(o.suggestions, ref!.suggestions, 0)).toBeNull();
    }
  });

  it('gives the same schema.roles status and findings for the same rows in another order', { timeout: 120_000 }, async () => {
    const audit = async (...paths: string[]): Promise<Report> => runAudit((sql) => engine.query(sql), { relation: await relationOf(...paths), input: { files: [], format: 'parquet' }, engine: engine.kind, now: FIXED_NOW, roles: ROLES });
    const [a, b] = [await audit(file('copies')), await audit(file('half-b'), file('half-a'))];
    const roles = (r: Report) => r.checks.find((c) => c.id === 'schema.roles');
    expect(roles(a)?.status).toBe(roles(b)?.status);
    expect(firstDifference(roles(a), roles(b), 1e-12)).toBeNull();
    // each id twice: the sample sees it, as the whole log would (the status must not be a pass)
    expect(roles(a)?.status).not.toBe('pass');
    expect(a.verdict).toBe(b.verdict);
  });
});
