/**
 * The corpus through the headless command, one spawned `counterweight audit` per case (native engine):
 * errors are one plain line with exit 3 and no stack trace; audits exit by verdict and print JSON that
 * matches the case. Then Ctrl-C during the audit of a 5M-row log.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Report } from '../../app/core/model/report.ts';
import { CASES, type CorpusCase } from '../corpus/cases.ts';
import { expectOutcome, FILES, hashCorpus } from './outcome.ts';

const BIN = path.resolve('bin/counterweight.mjs');

interface Run { code: number | null; stdout: string; stderr: string; ms: number }

function cli(args: readonly string[], timeoutMs = 180_000): Promise<Run> {
  return new Promise((resolve) => {
    const started = Date.now();
    const child = spawn(process.execPath, [BIN, ...args], { env: { ...process.env, NO_COLOR: '1' }, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d: Buffer) => { stdout += d.toString(); });
    child.stderr.on('data', (d: Buffer) => { stderr += d.toString(); });
    const timer = setTimeout(() => child.kill('SIGKILL'), timeoutMs);
    child.on('close', (code) => { clearTimeout(timer); resolve({ code, stdout, stderr, ms: Date.now() - started }); });
  });
}

function roleFlags(c: CorpusCase): string[] {
  const flags: string[] = [];
  for (const [role, col] of Object.entries(c.roles ?? {})) {
    if (role === 'segments') flags.push('--segments', (col as string[]).join(','));
    else flags.push('--role', `${role}=${String(col)}`);
  }
  return flags;
}

/** Two spawns at a time (the machine has two cores). */
async function inPairs<T, R>(items: readonly T[], job: (item: T) => Promise<R>): Promise<R[]> {
  const out: R[] = new Array(items.length);
  let next = 0;
  const worker = async () => { while (next < items.length) { const i = next++; out[i] = await job(items[i] as T); } };
  await Promise.all([worker(), worker()]);
  return out;
}

describe('counterweight audit on the corpus (spawned)', () => {
  const before = hashCorpus();
  const runs = new Map<string, Run>();
  beforeAll(async () => {
    const results = await inPairs(CASES, (c) => cli(['audit', path.join(FILES, c.file), '--json', '-', '--quiet', ...roleFlags(c)]));
    CASES.forEach((c, i) => runs.set(c.id, results[i] as Run));
  }, 600_000);

  it.each(CASES.map((c) => [c.id, c] as const))('%s', (_id, c) => {
    const r = runs.get(c.id) as Run;
    expect(r.stderr).not.toMatch(/^\s+at .+:\d+:\d+\)?$/m);
    expect(r.stderr).not.toMatch(/unexpected error|Unhandled|TypeError|ReferenceError/);
    if ('error' in c.expect) {
      expect(r.code).toBe(3);
      expect(r.stdout).toBe('');
      const line = r.stderr.trim();
      expect(line.split('\n')).toHaveLength(1);
      expect(line.startsWith('counterweight: ')).toBe(true);
      const message = line.replace(/^counterweight: /, '');
      expectOutcome({ error: Object.assign(new Error(message), { name: c.expect.error.name ?? 'EngineError', code: c.expect.error.code }) }, c.expect);
      if (c.id === 'empty') expect(message).toMatch(/0 bytes/);
    } else {
      const report = JSON.parse(r.stdout) as Report;
      expect(r.code).toBe(report.verdict === 'not-supported' ? 2 : 0);
      expectOutcome({ report }, c.expect);
      expect(report.input.files[0]?.sha256).toMatch(/^[0-9a-f]{64}$/);
    }
  });

  it('left every corpus file as it was', () => {
    expect(hashCorpus()).toEqual(before);
  });
});

describe('Ctrl-C during an audit of a 5,015,000-row log', () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'cw-sigint-'));
  const log = path.join(dir, 'maple-row-demo.csv');
  beforeAll(async () => {
    const gen = await new Promise<number | null>((resolve) => {
      const child = spawn(process.execPath, ['--import', 'tsx', 'sample-data/generate.ts', '--rows', '5000000', '--out', dir, '--formats', 'csv', '--demo-only'], { stdio: 'ignore' });
      child.on('close', resolve);
    });
    expect(gen).toBe(0);
  }, 120_000);
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('stops within 2 s of the signal, exits 130 with a plain message, and writes no report', async () => {
    const json = path.join(dir, 'report.json');
    const html = path.join(dir, 'report.html');
    const child = spawn(process.execPath, [BIN, 'audit', log, '--json', json, '--html', html], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (d: Buffer) => { stderr += d.toString(); });
    const exited = new Promise<{ code: number | null; at: number }>((resolve) => child.on('close', (code) => resolve({ code, at: Date.now() })));
    // The command starts in about 1.5 s; at 5 s the profile or cube scan of the 414 MB log is running.
    await new Promise((r) => setTimeout(r, 5000));
    const sent = Date.now();
    child.kill('SIGINT');
    const { code, at } = await exited;
    const ms = at - sent;
    console.log(`SIGINT to exit: ${ms} ms`);
    expect(ms).toBeLessThan(2000);
    expect(code).toBe(130);
    expect(stderr.trim()).toBe('counterweight: interrupted: the audit was stopped before it finished; no report was written.');
    expect(existsSync(json)).toBe(false);
    expect(existsSync(html)).toBe(false);
    expect(readFileSync(log).subarray(0, 12).toString()).toBe('decision_id,');
  }, 60_000);
});
