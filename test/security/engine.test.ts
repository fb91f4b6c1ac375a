/**
 * Security regressions on the locked engine itself (app/engine/native.ts restrictFileAccess, the engine
 * host's engine), one per reproduction of the review: it reads registered files only, a failed
 * registration grants nothing, a glob or folder grants its files and never the folder, nothing can be
 * written, and a result has a row cap. After each test the log's SHA-256 is unchanged and no file appeared.
 */
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';
import { scratchTree, SECRET_TEXT, WRITE_FORM_NAMES, writeForms, type Tree } from './fixture.ts';

let tree: Tree;
let engine: NativeEngine;
let before: { hash: string; listing: string[] };

beforeEach(async () => {
  tree = scratchTree();
  before = { hash: tree.logHash(), listing: tree.listing() };
  engine = await createNativeEngine({ restrictFileAccess: true, threads: 1 });
});
afterEach(async () => {
  await engine.close();
  expect(tree.logHash(), 'the registered log is unchanged').toBe(before.hash);
  tree.remove();
});

async function refused(sql: string): Promise<string> {
  const error = await engine.query(sql).then(() => null, (e: unknown) => e as Error);
  expect(error, sql).not.toBeNull();
  expect(error?.message, sql).not.toContain(SECRET_TEXT);
  return error?.message ?? '';
}

const lit = (p: string) => `'${p.replaceAll("'", "''")}'`;

describe('locked engine: reads only what was registered', () => {
  it('issue 18 #1: a failed registration of <dir>/*.nomatch grants nothing in <dir> (no read_text, no glob, no COPY into it)', async () => {
    await expect(engine.register({ kind: 'path', paths: [path.join(tree.root, '*.nomatch')], format: 'csv' })).rejects.toMatchObject({ code: 'io', message: expect.stringMatching(/No file matches/) });
    expect(await refused(`SELECT * FROM read_text(${lit(tree.secret)})`)).toMatch(/Refused/);
    expect(await refused(`SELECT * FROM glob(${lit(`${tree.root}/*`)})`)).toMatch(/Refused/);
    expect(await refused(`SELECT * FROM read_csv(${lit(path.join(tree.victim, 'other.txt'))})`)).toMatch(/Refused/);
    expect(await refused(`COPY (SELECT 1) TO ${lit(path.join(tree.victim, 'planted.sh'))}`)).toMatch(/reads only/);
    expect(tree.listing()).toEqual(before.listing);
  });

  it('issue 18 #1: a failed registration of /*.nomatch grants nothing (read_text(\'/etc/hostname\'), glob(\'/etc/*\'))', async () => {
    await expect(engine.register({ kind: 'path', paths: ['/*.nomatch'], format: 'csv' })).rejects.toMatchObject({ code: 'io' });
    await refused("SELECT * FROM read_text('/etc/hostname')");
    await refused("SELECT * FROM glob('/etc/*')");
  });

  it('a registration that fails on a named file is rolled back: the file stays unreadable afterwards', async () => {
    const fake = path.join(tree.logs, 'not-parquet.parquet');
    writeFileSync(fake, 'this is not a parquet file');
    await expect(engine.register({ kind: 'path', paths: [fake] })).rejects.toMatchObject({ code: 'io' });
    expect(await refused(`SELECT * FROM read_text(${lit(fake)})`)).toMatch(/Refused/);
  });

  it('a registered log is readable; its folder, its neighbours and the files a link points to are not', async () => {
    const src = await engine.register({ kind: 'path', paths: [tree.log] });
    expect((await engine.query(`SELECT count(*)::DOUBLE AS n FROM ${src.relation}`)).columns[0]).toEqual([2]);
    await refused(`SELECT * FROM read_text(${lit(path.join(tree.logs, 'link-out.csv'))})`);
    await refused(`SELECT * FROM glob(${lit(`${tree.logs}/*`)})`);
    await refused(`SELECT * FROM read_text(${lit(path.join(tree.logs, '..', 'secret.txt'))})`);
  });

  it('a glob or a folder is expanded to its files, each granted alone: a file added later stays unreadable', async () => {
    writeFileSync(path.join(tree.logs, 'b.csv'), 'decision_id,promotion,propensity,ordered\nd3,bakery,0.5,1\n');
    const src = await engine.register({ kind: 'path', paths: [path.join(tree.logs, '*.csv')] });
    expect(src.files).toEqual([path.join(tree.logs, 'a.csv'), path.join(tree.logs, 'b.csv')]);
    const later = path.join(tree.logs, 'c.csv');
    writeFileSync(later, 'decision_id\nd9\n');
    await refused(`SELECT * FROM read_csv(${lit(later)})`);
    await refused(`SELECT * FROM glob(${lit(`${tree.logs}/*.csv`)})`);
  });
});

describe('locked engine: nothing can write', () => {
  it.each(WRITE_FORM_NAMES.map((n) => [n]))('issue 18 #1: %s is refused, the log unchanged and no file created', async (name) => {
    const src = await engine.register({ kind: 'path', paths: [tree.log] });
    const form = writeForms(tree, src.relation).find((f) => f.name === name);
    if (!form) throw new Error(name);
    await refused(form.sql);
    expect(tree.listing()).toEqual(before.listing);
    // The engine still reads the log afterwards, with the same rows.
    expect((await engine.query(`SELECT count(*)::DOUBLE AS n FROM ${src.relation}`)).columns[0]).toEqual([2]);
  });

  it('the statement gate refuses before planning: EXPORT DATABASE does not even create its folder', async () => {
    expect(await refused(`EXPORT DATABASE ${lit(path.join(tree.victim, 'export'))}`)).toMatch(/reads only \(SELECT, DESCRIBE\)/);
    expect(tree.listing()).toEqual(before.listing);
  });

  it('reads still pass the gate: SELECT, WITH, UNION, DESCRIBE, SUMMARIZE', async () => {
    const src = await engine.register({ kind: 'path', paths: [tree.log] });
    for (const sql of [`SELECT 1 AS x`, `WITH t AS (SELECT 1 AS x) SELECT * FROM t`, 'SELECT 1 AS x UNION ALL SELECT 2', `DESCRIBE ${src.relation}`, `SUMMARIZE ${src.relation}`]) {
      await expect(engine.query(sql), sql).resolves.toBeDefined();
    }
  });
});

describe('locked engine: the projection of a CSV (project(), issue 14 item 4)', () => {
  it('is a temporary table in memory: readable by SELECT, no file written, dropped on release; query() still refuses CREATE', async () => {
    const src = await engine.register({ kind: 'path', paths: [tree.log] });
    const projection = await engine.project(src.relation, ['decision_id', 'propensity']);
    if (!projection) throw new Error('a CSV is projected');
    expect(projection.relation).toBe('"src_1_columns"');
    expect(projection.sql).toMatch(/^CREATE TEMP TABLE "src_1_columns" AS SELECT "decision_id", "propensity" FROM "src_1"$/);
    const read = await engine.query(`SELECT decision_id, propensity::DOUBLE AS p FROM ${projection.relation} ORDER BY decision_id`);
    expect(read.columns).toEqual([['d1', 'd2'], [0.5, 0.25]]);
    // only the named columns are held
    expect(await refused(`SELECT promotion FROM ${projection.relation}`)).toMatch(/promotion/);
    expect(tree.listing()).toEqual(before.listing);
    // the gate is unchanged: a caller cannot make a table of its own, nor write the projection anywhere
    expect(await refused(`CREATE TEMP TABLE t AS SELECT * FROM ${src.relation}`)).toMatch(/reads only/);
    expect(await refused(`COPY ${projection.relation} TO ${lit(path.join(tree.victim, 'copy.csv'))}`)).toMatch(/reads only/);
    await projection.release();
    expect(await refused(`SELECT * FROM ${projection.relation}`)).toMatch(/src_1_columns/);
    await projection.release();
    expect(tree.listing()).toEqual(before.listing);
  });

  it('takes registered relations only; a column name is an identifier, never SQL', async () => {
    const src = await engine.register({ kind: 'path', paths: [tree.log] });
    await expect(engine.project('"src_9"', ['decision_id'])).rejects.toMatchObject({ code: 'sql', message: expect.stringMatching(/No log is registered/) });
    await expect(engine.project(`(SELECT * FROM read_text(${lit(tree.secret)}))`, ['content'])).rejects.toMatchObject({ code: 'sql' });
    const injected = `decision_id" FROM ${src.relation}; COPY (SELECT 1) TO ${lit(path.join(tree.victim, 'planted.sh'))}; --`;
    await expect(engine.project(src.relation, [injected])).rejects.toMatchObject({ message: expect.not.stringContaining(SECRET_TEXT) });
    expect(tree.listing()).toEqual(before.listing);
  });

  it('a Parquet log is not projected (it is cheap to read again)', async () => {
    const parquet = path.join(tree.logs, 'b.parquet');
    const writer = await createNativeEngine({ threads: 1 });
    await writer.query(`COPY (SELECT 'd1' AS decision_id, 0.5 AS propensity) TO ${lit(parquet)} (FORMAT parquet)`);
    await writer.close();
    const src = await engine.register({ kind: 'path', paths: [parquet] });
    expect(await engine.project(src.relation, ['decision_id'])).toBeNull();
  });
});

describe('locked engine: results are bounded', () => {
  it('issue 18 #5: SELECT range::DOUBLE FROM range(20000000) is refused past the row cap with a clear error', async () => {
    const error = await engine.query('SELECT range::DOUBLE FROM range(20000000)').then(() => null, (e: unknown) => e as Error & { code?: string });
    expect(error?.code).toBe('too-large');
    expect(error?.message).toMatch(/more than 2,000,000 rows, the most one answer may hold/);
    // The engine stays usable.
    expect((await engine.query('SELECT 42 AS answer')).columns).toEqual([[42]]);
  });
});
