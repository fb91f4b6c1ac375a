/**
 * `verify --reaudit` runs the recorded audit again and compares the report body's digest. Exact sums make a
 * re-run reproduce the body byte for byte; a signed report whose numbers were edited (and re-signed, so its
 * digest and signature are fine) is caught by the re-audit alone, which names the value that differs.
 */
import { copyFileSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './spawn.ts';

const SAMPLE = path.resolve('sample-data');
const dir = mkdtempSync(path.join(tmpdir(), 'cw-reaudit-'));

const cli = (args: string[]) => runCli(args, dir, 180_000);

beforeAll(() => {
  copyFileSync(path.join(SAMPLE, 'maple-row-demo.parquet'), path.join(dir, 'log.parquet'));
  copyFileSync(path.join(SAMPLE, 'maple-row-v9-policy.csv'), path.join(dir, 'v9.csv'));
  // the demo log is not supported (exit 2): its planted defects fail checks
  expect(cli(['audit', 'log.parquet', '--target', 'table:v9.csv', '--json', 'report.json', '--quiet']).code).toBe(2);
  expect(cli(['keygen', '--out', 'reviewer']).code).toBe(0);
  expect(cli(['sign', 'report.json', '--reviewer', 'R. Okafor', '--decision', 'approve', '--key', 'reviewer.key', '--out', 'signed.json']).code).toBe(0);
}, 300_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('verify --reaudit', () => {
  it('confirms a signed audit by running it again', () => {
    const r = cli(['verify', 'signed.json', '--public-key', 'reviewer.pub', '--reaudit']);
    expect(r.stdout).toMatch(/ok {4}re-audit on native gives the same report body/);
    expect(r.stdout).toContain('Verified.');
    expect(r.code).toBe(0);
  }, 300_000);

  it('catches an edited number that was signed again, and names where it is', () => {
    const report = JSON.parse(readFileSync(path.join(dir, 'report.json'), 'utf8'));
    report.targets[0].ess = report.targets[0].ess * 1.5;
    writeFileSync(path.join(dir, 'edited.json'), JSON.stringify(report, null, 2));
    expect(cli(['sign', 'edited.json', '--reviewer', 'R. Okafor', '--decision', 'approve', '--key', 'reviewer.key', '--out', 'edited-signed.json']).code).toBe(0);
    const plain = cli(['verify', 'edited-signed.json', '--public-key', 'reviewer.pub']);
    expect(plain.code).toBe(0);
    const r = cli(['verify', 'edited-signed.json', '--public-key', 'reviewer.pub', '--reaudit']);
    expect(r.stdout).toContain('FAIL  re-audit on native gives a different report body');
    expect(r.stdout).toContain('/targets/0/ess');
    expect(r.code).toBe(2);
  }, 300_000);
});
