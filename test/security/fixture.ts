/**
 * A scratch tree for the security regressions: a log folder with one registered log, a secret file
 * beside it, a folder an attacker would plant into, and a link out of the log folder. Every test checks
 * afterwards that the log's bytes are unchanged and that no file appeared anywhere in the tree.
 */
import { createHash } from 'node:crypto';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, realpathSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';

export interface Tree {
  readonly root: string;
  readonly logs: string;
  readonly log: string;
  readonly secret: string;
  readonly victim: string;
  /** Every file under root, relative, sorted (links included). */
  listing(): string[];
  logHash(): string;
  remove(): void;
}

export const SECRET_TEXT = 'the secret is 7f3a';
const LOG_TEXT = 'decision_id,promotion,propensity,ordered\nd1,bakery,0.5,1\nd2,household,0.25,0\n';

export function scratchTree(): Tree {
  const root = realpathSync(mkdtempSync(path.join(os.tmpdir(), 'cw-security-')));
  const logs = path.join(root, 'logs');
  const victim = path.join(root, 'victim');
  mkdirSync(logs);
  mkdirSync(victim);
  const log = path.join(logs, 'a.csv');
  writeFileSync(log, LOG_TEXT);
  const secret = path.join(root, 'secret.txt');
  writeFileSync(secret, SECRET_TEXT);
  writeFileSync(path.join(victim, 'other.txt'), 'not for the engine');
  symlinkSync(secret, path.join(logs, 'link-out.csv'));
  const walk = (dir: string, prefix = ''): string[] => readdirSync(dir, { withFileTypes: true }).flatMap((d) => {
    const rel = path.join(prefix, d.name);
    return d.isDirectory() ? [`${rel}/`, ...walk(path.join(dir, d.name), rel)] : [rel];
  });
  return {
    root,
    logs,
    log,
    secret,
    victim,
    listing: () => walk(root).sort(),
    logHash: () => createHash('sha256').update(readFileSync(log)).digest('hex'),
    remove: () => rmSync(root, { recursive: true, force: true }),
  };
}

/** The statements an attacker would use to write: each must be refused and leave no trace. */
export function writeForms(tree: Pick<Tree, 'log' | 'victim'>, relation: string): { name: string; sql: string }[] {
  const lit = (p: string) => `'${p.replaceAll("'", "''")}'`;
  return [
    { name: 'COPY ... TO a new file', sql: `COPY (SELECT 'echo owned' AS x) TO ${lit(path.join(tree.victim, 'planted.sh'))} (HEADER false)` },
    { name: 'COPY ... TO over the registered log (USE_TMP_FILE false)', sql: `COPY (SELECT 1 AS x) TO ${lit(tree.log)} (USE_TMP_FILE false)` },
    { name: 'COPY the log over itself', sql: `COPY ${relation} TO ${lit(tree.log)}` },
    { name: 'EXPORT DATABASE', sql: `EXPORT DATABASE ${lit(path.join(tree.victim, 'export'))}` },
    { name: 'CREATE TABLE (persistent after ATTACH)', sql: 'CREATE TABLE kept AS SELECT 1 AS x' },
    { name: 'ATTACH a database file', sql: `ATTACH ${lit(path.join(tree.victim, 'x.duckdb'))} AS x` },
    { name: 'SET a file setting back', sql: 'SET enable_external_access = true' },
    { name: 'two statements, the second a write', sql: `SELECT 1; COPY (SELECT 1) TO ${lit(path.join(tree.victim, 'two.csv'))}` },
    { name: 'INSTALL an extension', sql: 'INSTALL httpfs' },
  ];
}

/** The write forms' names, for table-driven tests. */
export const WRITE_FORM_NAMES = writeForms({ log: '/log.csv', victim: '/victim' }, '"src_1"').map((f) => f.name);
