/**
 * The self-contained HTML report in a real browser: the demo log's report (written by the command) makes
 * no network request, runs no script, and renders; a hostile report (markup in log values) runs nothing.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { expect, test } from '@playwright/test';
import type { Page } from '@playwright/test';
import { serializeReport } from '../../app/report/json.ts';
import { fixtureReport } from '../unit/report/fixture-report.ts';

const ROOT = path.resolve('.');
// Reports go to a private folder: test-results/ is Playwright's output folder and is emptied by other runs.
let OUT = '';
const SCREENSHOT = path.join(ROOT, 'test-results', 'html-report.png');
let DEMO_HTML = '';
let HOSTILE_HTML = '';
const PAYLOAD = '<script>window.__cwInjected = 1</script><img src=x onerror="window.__cwInjected = 2">';

function cli(args: string[]): void {
  const r = spawnSync(process.execPath, [path.join(ROOT, 'bin/counterweight.mjs'), ...args], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
  // The demo log is not supported (exit 2) by design; anything else but 0 means the command failed.
  if (r.status !== 0 && r.status !== 2) throw new Error(`counterweight ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
}

test.beforeAll(() => {
  OUT = mkdtempSync(path.join(tmpdir(), 'cw-html-report-'));
  DEMO_HTML = path.join(OUT, 'maple-row-demo.html');
  HOSTILE_HTML = path.join(OUT, 'hostile.html');
  cli(['audit', 'sample-data/maple-row-demo.parquet', '--html', DEMO_HTML, '--quiet']);
  const base = fixtureReport({ hostile: true });
  const hostile = {
    ...base,
    segments: base.segments.map((s) => ({ ...s, segment: { region: PAYLOAD, device: 'web' } })),
    reasons: [{ check: 'propensity.exploration' as const, status: 'fail' as const, message: PAYLOAD }],
  };
  const json = path.join(OUT, 'hostile.json');
  writeFileSync(json, serializeReport(hostile));
  cli(['render', json, '--html', HOSTILE_HTML]);
});

test.afterAll(() => { if (OUT) rmSync(OUT, { recursive: true, force: true }); });

/** Fails on any request that is not the file itself or inline data; blocks it too. */
async function guardNetwork(page: Page): Promise<string[]> {
  const external: string[] = [];
  page.on('request', (request) => {
    const url = request.url();
    if (!url.startsWith('file:') && !url.startsWith('data:')) external.push(url);
  });
  await page.route('**/*', (route) => {
    const url = route.request().url();
    return url.startsWith('file:') || url.startsWith('data:') ? route.continue() : route.abort();
  });
  return external;
}

test('the demo report opens from file:// with no network request and no script, and is saved as a screenshot', async ({ page }, testInfo) => {
  const external = await guardNetwork(page);
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  await page.goto(pathToFileURL(DEMO_HTML).href);
  await expect(page.locator('.verdict .label')).toContainText('Verdict: Not supported');
  await expect(page.locator('section.check')).toHaveCount(14);
  expect(await page.locator('figure.chart svg').count()).toBeGreaterThan(5);
  expect(await page.locator('script').count()).toBe(0);
  mkdirSync(path.dirname(SCREENSHOT), { recursive: true });
  await page.screenshot({ path: SCREENSHOT, fullPage: true });
  await testInfo.attach('html-report', { path: SCREENSHOT, contentType: 'image/png' });
  expect(external).toEqual([]);
  expect(errors).toEqual([]);
});

test('a report whose log values hold markup runs no script and shows the markup as text', async ({ page }) => {
  const external = await guardNetwork(page);
  await page.goto(pathToFileURL(HOSTILE_HTML).href);
  expect(await page.evaluate(() => (window as unknown as { __cwInjected?: number }).__cwInjected)).toBeUndefined();
  expect(await page.locator('script').count()).toBe(0);
  expect(await page.locator('img').count()).toBe(0);
  await expect(page.locator('#verdict li').first()).toContainText(PAYLOAD);
  await expect(page.locator('h2#segments + table td').first()).toContainText(`region=${PAYLOAD}, device=web`);
  await expect(page.locator('[id="check-propensity.exploration"] > table').last()).toContainText('"; DROP TABLE x; --');
  expect(external).toEqual([]);
});
