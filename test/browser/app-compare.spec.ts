/**
 * "Compare with…" in the app, standalone (DuckDB-Wasm on the CSV) and hosted (native engine on the Parquet log):
 * audit the week after the demo log, pick the demo log's report as the baseline, see what got worse, and export
 * the comparison. Outside reference: the headless `counterweight compare` on the same two reports, and the
 * week's manifest (sample-data/maple-row-next.manifest.json) for what must show as worse.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { auditWithV9Table, exportedReportText, noSeriousViolations, V9_POLICY } from './app-steps.ts';
import { inBothWebModes } from './hosted-page.ts';

const ROOT = process.cwd();
const SAMPLE = path.join(ROOT, 'sample-data');
const tmp = mkdtempSync(path.join(os.tmpdir(), 'cw-compare-ui-'));
const BASELINE = path.join(tmp, 'week1.json');

function cli(args: string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, ['bin/counterweight.mjs', ...args], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

interface ComparisonJson { regression: boolean; worse: { kind: string; check?: string; segment?: Record<string, string>; action?: string; regression: boolean; message: string }[] }
const shape = (c: ComparisonJson) => c.worse.map((h) => [h.kind, h.check ?? '', JSON.stringify(h.segment ?? {}), h.action ?? '', h.regression]);

test.beforeAll(() => {
  const r = cli(['audit', path.join(SAMPLE, 'maple-row-demo.parquet'), '--target', `table:${V9_POLICY}`, '--json', BASELINE, '--quiet']);
  expect(r.code, r.stderr).toBe(2);
});

async function auditAndCompare(page: Page, mode: string): Promise<void> {
  await auditWithV9Table(page);

  await page.getByRole('button', { name: 'Compare with…' }).click();
  await expect(page.getByRole('heading', { name: 'Compare with a baseline' })).toBeVisible();
  await page.getByTestId('baseline-file-input').setInputFiles({ name: 'not-a-report.json', mimeType: 'application/json', buffer: Buffer.from('{"schema": "counterweight.report/1"}') });
  await expect(page.getByRole('alert')).toContainText('not-a-report.json is not a valid counterweight.report/1 report');
  await page.getByTestId('baseline-file-input').setInputFiles(BASELINE);
  await expect(page.getByRole('heading', { name: /^What got worse/ })).toBeVisible();
  // sample-data/maple-row-next.manifest.json: exploration lapsed in east-ridge on ios; v8.1 mis-logs recipe-kit.
  await expect(page.getByText(/New fail finding: propensity\.exploration \(region=east-ridge, device=ios/)).toBeVisible();
  await expect(page.getByText(/New fail finding: balance\.weights \(.*action recipe-kit/).first()).toBeVisible();
  await expect(page.getByText(/Resolved: propensity\.range \(device=android\)/)).toBeVisible();
  await page.screenshot({ path: `test-results/screens/30-compare-${mode}.png`, fullPage: false });
  await noSeriousViolations(page, `compare (${mode})`);

  const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export comparison JSON' }).click()]);
  const ui = readFileSync(await download.path(), 'utf8');

  // The report the app compared, exported as the sign-off screen exports it, and the headless command on it.
  const current = path.join(tmp, `week2-${mode}.json`);
  writeFileSync(current, await exportedReportText(page));
  const headless = cli(['compare', BASELINE, current, '--json', '-', '--quiet']);
  expect(headless.code, headless.stderr).toBe(2);
  expect(ui).toBe(headless.stdout);

  // And the same changes as the headless audit of the same log with --baseline (engine and paths aside). The app
  // sends the roles the Columns screen confirmed, so the command is given the same roles (sample-data/README.md);
  // role evidence, and its schema.roles warning, is read only for roles the audit has to suggest.
  const oneGo = path.join(tmp, `one-go-${mode}.json`);
  const roles = ['decision_id=decision_id', 'time=logged_at', 'action=promotion', 'propensity=propensity', 'reward=ordered', 'policy_version=policy_version', 'segments=region,device,tenure'].flatMap((r) => ['--role', r]);
  cli(['audit', path.join(SAMPLE, mode === 'hosted' ? 'maple-row-next.parquet' : 'maple-row-next.csv'), ...roles, '--target', `table:${V9_POLICY}`, '--baseline', BASELINE, '--comparison-json', oneGo, '--quiet']);
  expect(shape(JSON.parse(ui) as ComparisonJson)).toEqual(shape(JSON.parse(readFileSync(oneGo, 'utf8')) as ComparisonJson));

  // A click through to the rows behind a new finding opens its check in the current log.
  await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'Compare' }).click();
  await page.locator('tr[data-finding-state="new"]').filter({ hasText: 'propensity.exploration' }).getByRole('button', { name: 'Rows behind it' }).click();
  await expect(page.getByRole('heading', { name: /Exploration/ }).first()).toBeVisible();
  await noSeriousViolations(page, `check detail (${mode})`);
}

inBothWebModes('compare the week after with the demo log\'s report', { timeoutMs: 240_000, logFolders: [SAMPLE] }, async (page, mode) => {
  await page.getByTestId('log-file-input').setInputFiles(path.join(SAMPLE, mode === 'hosted' ? 'maple-row-next.parquet' : 'maple-row-next.csv'));
  await auditAndCompare(page, mode);
});
