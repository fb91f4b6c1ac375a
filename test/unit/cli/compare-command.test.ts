/**
 * `counterweight compare`, `audit --baseline` and `history` as a user runs them (spawned), on audits of the demo
 * log and of the week after it: exit statuses, the JSON contract, the summary's order.
 */
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { validateComparison } from '../../../app/report/comparison-json.ts';
import { expectInputErrors, runCli } from './spawn.ts';

const SAMPLE = path.resolve('sample-data');
const cli = (args: string[], cwd: string) => runCli(args, cwd, 120_000);

const dir = mkdtempSync(path.join(tmpdir(), 'cw-compare-'));
const v9 = path.join(SAMPLE, 'maple-row-v9-policy.csv');

beforeAll(() => {
  for (const [log, out] of [['maple-row-demo.parquet', 'week1.json'], ['maple-row-next.parquet', 'week2.json']] as const) {
    const r = cli(['audit', path.join(SAMPLE, log), '--target', `table:${v9}`, '--json', out, '--quiet'], dir);
    expect(r.code, r.stderr).toBe(2);
  }
}, 120_000);

describe('counterweight compare', () => {
  it('exits 2 on the planted regressions, leads the summary with what got worse, and writes a valid comparison', () => {
    const r = cli(['compare', 'week1.json', 'week2.json', '--json', 'cmp.json', '--html', 'cmp.html'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(2);
    const worse = r.stdout.indexOf('What got worse');
    expect(worse).toBeGreaterThan(0);
    expect(worse).toBeLessThan(r.stdout.indexOf('What got better'));
    expect(r.stdout).toMatch(/REGRESSION New fail finding: propensity\.exploration \(region=east-ridge, device=ios/);
    const json = JSON.parse(readFileSync(path.join(dir, 'cmp.json'), 'utf8')) as unknown;
    expect(validateComparison(json).errors).toEqual([]);
    const page = readFileSync(path.join(dir, 'cmp.html'), 'utf8');
    expect(page).toContain('Content-Security-Policy');
    expect(page).not.toMatch(/<script|https?:\/\/(?!counterweight\.invalid)/);
  });

  it('exits 0 for a report compared with itself, and the JSON on stdout says nothing changed', () => {
    const r = cli(['compare', 'week2.json', 'week2.json', '--json', '-'], dir);
    expect(r.code).toBe(0);
    const c = JSON.parse(r.stdout) as { worse: unknown[]; better: unknown[]; regression: boolean };
    expect([c.worse, c.better, c.regression]).toEqual([[], [], false]);
    expect(r.stderr).toMatch(/What got worse \(0\)/);
  });

  it('--fail-on any-change exits 2 when only an improvement happened, while the default exits 0', () => {
    const week2 = JSON.parse(readFileSync(path.join(dir, 'week2.json'), 'utf8')) as { checks: { id: string; status: string }[] };
    const better = { ...week2, checks: week2.checks.map((c) => (c.id === 'drift.reward' ? { ...c, status: 'pass' } : c)) };
    writeFileSync(path.join(dir, 'week2-better.json'), JSON.stringify(better));
    expect(cli(['compare', 'week2.json', 'week2-better.json', '--quiet'], dir).code).toBe(0);
    expect(cli(['compare', 'week2.json', 'week2-better.json', '--fail-on', 'any-change', '--quiet'], dir).code).toBe(2);
    expect(cli(['compare', 'week2.json', 'week2.json', '--fail-on', 'any-change', '--quiet'], dir).code).toBe(0);
    // Backwards in time the android propensity loss is new: a regression too.
    expect(cli(['compare', 'week2.json', 'week1.json', '--quiet'], dir).code).toBe(2);
  });

  it('exits 3 with a specific message for a missing report, a file that is not a report, a broken report and a bad option', () => {
    writeFileSync(path.join(dir, 'not-report.json'), '{"hello": 1}');
    const broken = JSON.parse(readFileSync(path.join(dir, 'week1.json'), 'utf8')) as Record<string, unknown>;
    writeFileSync(path.join(dir, 'broken.json'), JSON.stringify({ ...broken, verdict: 'perhaps' }));
    expectInputErrors((args) => cli(args, dir), [
      [['compare', 'missing.json', 'week2.json'], 'no such file: missing.json'],
      [['compare', 'not-report.json', 'week2.json'], 'is not a Counterweight report'],
      [['compare', 'broken.json', 'week2.json'], 'broken.json is not a valid counterweight.report/1 report: /verdict'],
      [['compare', 'week1.json', 'week2.json', '--fail-on', 'sometimes'], '--fail-on'],
      [['compare', 'week1.json'], 'compare'],
      [['compare', 'week1.json', 'week2.json', '--json', 'week1.json'], 'refusing to write the comparison over the input report'],
    ]);
  });
});

describe('counterweight audit --baseline', () => {
  it('audits and compares in one go; the exit status is the comparison\'s, and its JSON equals the compare command\'s', () => {
    const r = cli(['audit', path.join(SAMPLE, 'maple-row-next.parquet'), '--target', `table:${v9}`, '--baseline', 'week1.json', '--comparison-json', 'one-go.json', '--json', 'week2-again.json'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(2);
    expect(r.stdout.indexOf('Verdict:')).toBeLessThan(r.stdout.indexOf('What got worse'));
    const strip = (file: string) => {
      const c = JSON.parse(readFileSync(path.join(dir, file), 'utf8')) as Record<string, Record<string, unknown>>;
      return { ...c, current: { ...c.current, started_at: '' } };
    };
    cli(['compare', 'week1.json', 'week2-again.json', '--json', 'two-steps.json', '--quiet'], dir);
    expect(strip('one-go.json')).toEqual(strip('two-steps.json'));
  });

  it('exits 0 against a baseline of the same log, and 3 for comparison options without --baseline', () => {
    expect(cli(['audit', path.join(SAMPLE, 'maple-row-next.parquet'), '--target', `table:${v9}`, '--baseline', 'week2.json', '--quiet'], dir).code).toBe(0);
    const r = cli(['audit', path.join(SAMPLE, 'maple-row-next.parquet'), '--comparison-json', 'x.json'], dir);
    expect(r.code).toBe(3);
    expect(r.stderr).toContain('need --baseline');
  });
});

describe('counterweight history', () => {
  it('reads a folder of reports in time order and writes its HTML', () => {
    const folder = path.join(dir, 'weeks');
    mkdirSync(folder, { recursive: true });
    copyFileSync(path.join(dir, 'week2.json'), path.join(folder, 'b.json'));
    copyFileSync(path.join(dir, 'week1.json'), path.join(folder, 'a.json'));
    writeFileSync(path.join(folder, 'notes.txt'), 'not a report');
    const r = cli(['history', 'weeks', '--html', 'history.html'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/2 reports/);
    expect(r.stdout.indexOf('a.json')).toBeLessThan(r.stdout.indexOf('b.json'));
    const page = readFileSync(path.join(dir, 'history.html'), 'utf8');
    expect(page).toContain('First seen');
    // The charts the app's History screen draws (app/charts/history.ts), inline as SVG, nothing active.
    expect(page).toContain('aria-label="Segment readiness over time"><svg');
    expect(page).toMatch(/estimated value over time[^<]*"><svg/);
    expect(page).not.toMatch(/<script/i);
    expect(cli(['history', 'missing-folder'], dir).code).toBe(3);
  });
});
