/**
 * The History screen, standalone (DuckDB-Wasm page) and hosted (native engine behind the page): the demo's two
 * weeks are audited by the headless command, their report files are picked (standalone) or dropped (hosted) on
 * the screen, and the screen must show what `counterweight history` reads from the same files and export the
 * same JSON byte for byte. Outside references: the headless command's history of the folder, and the next week's
 * manifest (sample-data/maple-row-next.manifest.json: exploration lapsed in east-ridge × ios, support.target fails).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import type { History } from '../../app/core/compare/history.ts';
import { HistorySchema } from '../../app/core/compare/history.ts';
import { noSeriousViolations, V9_POLICY } from './app-steps.ts';
import { hostedPage } from './hosted-page.ts';

const ROOT = process.cwd();
const SAMPLE = path.join(ROOT, 'sample-data');
const dir = mkdtempSync(path.join(os.tmpdir(), 'cw-history-ui-'));
const WEEK1 = path.join(dir, 'week1.json');
const WEEK2 = path.join(dir, 'week2.json');
let headless = '';

function cli(args: string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, ['bin/counterweight.mjs', ...args], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

test.beforeAll(() => {
  test.setTimeout(240_000);
  for (const [log, out] of [['maple-row-demo.parquet', WEEK1], ['maple-row-next.parquet', WEEK2]] as const) {
    const r = cli(['audit', path.join(SAMPLE, log), '--target', `table:${V9_POLICY}`, '--json', out, '--quiet']);
    expect(r.code, r.stderr).toBe(2);
  }
  const r = cli(['history', dir, '--json', '-']);
  expect(r.code, r.stderr).toBe(0);
  headless = r.stdout;
});

async function openHistory(page: Page): Promise<void> {
  await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'History' }).click();
  await expect(page.getByRole('heading', { name: 'Audit history' })).toBeVisible();
}

/** What the screen shows must be what the headless history holds. */
async function seesTheHistory(page: Page, mode: string): Promise<void> {
  const h = HistorySchema.parse(JSON.parse(headless)) as History;
  expect(h.entries.map((e) => e.label)).toEqual(['week1.json', 'week2.json']);
  const verdicts = page.getByTestId('history-verdicts').locator('tbody tr');
  await expect(verdicts).toHaveCount(h.entries.length);
  for (const [i, e] of h.entries.entries()) {
    await expect(verdicts.nth(i)).toContainText(e.label);
    await expect(verdicts.nth(i).locator('[data-verdict]')).toHaveAttribute('data-verdict', e.verdict);
    await expect(verdicts.nth(i)).toContainText(e.rows.toLocaleString('en'));
  }
  // Every check's status per report, as the command has it.
  for (const c of h.checks) {
    const cells = page.getByTestId('history-checks').locator(`tr[data-check="${c.id}"] td`);
    await expect(cells).toHaveCount(c.statuses.length);
    for (const [i, s] of c.statuses.entries()) await expect(cells.nth(i)).toContainText(new RegExp(s === 'skipped' ? 'not applicable|skipped' : s ?? '—', 'i'));
  }
  // The manifest's changes: support.target fails in the second week, east-ridge × ios lost its exploration.
  const support = h.checks.find((c) => c.id === 'support.target');
  expect(support?.statuses[1]).toBe('fail');
  const target = h.targets[0]!;
  const targetTable = page.getByTestId('history-target-table');
  await expect(targetTable).toContainText(target.name);
  await expect(targetTable.locator('tr', { hasText: 'ESS' }).first()).toContainText(Math.round(target.ess[1]!).toLocaleString('en'));
  await page.getByLabel('Show').selectOption('new');
  const fresh = h.findings.filter((f) => f.first === 1);
  await expect(page.getByTestId('history-findings').locator('tbody tr')).toHaveCount(fresh.length);
  expect(fresh.some((f) => f.check === 'propensity.exploration' && f.segment.region === 'east-ridge' && f.segment.device === 'ios')).toBe(true);
  await expect(page.getByTestId('history-findings').locator('tr', { hasText: 'propensity.exploration' }).filter({ hasText: 'region=east-ridge, device=ios' }).first()).toBeVisible();
  await page.getByLabel('Only segments whose readiness changed').check();
  const changed = h.segments.filter((s) => new Set(s.statuses).size > 1);
  await expect(page.getByText(`${changed.length} of ${h.segments.length} segments`)).toBeVisible();
  await page.getByText('Segment readiness as a table').click();
  await expect(page.getByTestId('history-segments').locator('tbody tr')).toHaveCount(changed.length);

  await page.setViewportSize({ width: 1280, height: 800 });
  await page.getByRole('heading', { name: 'Targets' }).scrollIntoViewIfNeeded();
  await page.screenshot({ path: `test-results/screens/40-history-${mode}.png` });
  await page.screenshot({ path: `test-results/screens/41-history-${mode}-full.png`, fullPage: true });
  await noSeriousViolations(page, `history (${mode})`);

  const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export history JSON' }).click()]);
  expect(readFileSync(await download.path(), 'utf8')).toBe(headless);
  const [html] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export history HTML' }).click()]);
  const page2 = readFileSync(await html.path(), 'utf8');
  expect(page2).toContain('Segment readiness over time');
  expect(page2).toContain('<svg');
}

test('standalone web mode: the two weeks\' reports, picked as files, read as the headless history', async ({ page }) => {
  test.setTimeout(120_000);
  await page.goto('/');
  await openHistory(page);
  await noSeriousViolations(page, 'history (empty)');
  // Picked newest first and with a file that is not a report: the order is the logs', and the bad file is named.
  const file = (f: string) => ({ name: path.basename(f), mimeType: 'application/json', buffer: readFileSync(f) });
  await page.getByTestId('history-file-input').setInputFiles([
    file(WEEK2),
    { name: 'notes.json', mimeType: 'application/json', buffer: Buffer.from('{"schema": "counterweight.report/1"}') },
    file(WEEK1),
  ]);
  await expect(page.getByRole('alert')).toContainText('notes.json is not a valid counterweight.report/1 report');
  await expect(page.getByTestId('history-chosen')).toContainText('2 reports');
  await seesTheHistory(page, 'standalone');
});

test.describe('hosted web mode', () => {
  const hosted = hostedPage([SAMPLE]);

  test('the two weeks\' reports, dropped on the screen, read as the headless history', async ({ page }) => {
    test.setTimeout(120_000);
    await hosted.open(page);
    await openHistory(page);
    const files = [WEEK1, WEEK2].map((f) => ({ name: path.basename(f), text: readFileSync(f, 'utf8') }));
    const dataTransfer = await page.evaluateHandle((list) => {
      const dt = new DataTransfer();
      for (const f of list) dt.items.add(new File([f.text], f.name, { type: 'application/json' }));
      return dt;
    }, files);
    const zone = page.getByTestId('history-drop-zone');
    await zone.dispatchEvent('dragover', { dataTransfer });
    await expect(zone).toHaveClass(/dropzone-active/);
    await zone.dispatchEvent('drop', { dataTransfer });
    await expect(page.getByTestId('history-chosen')).toContainText('2 reports');
    await seesTheHistory(page, 'hosted');
  });
});
