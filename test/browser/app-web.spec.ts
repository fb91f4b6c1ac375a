/** The app in standalone web mode (DuckDB-Wasm in a worker) on the Maple Row Market demo log, screen by screen. */
import { readFileSync } from 'node:fs';
import { expect, test, type Page } from '@playwright/test';
import { validateReport } from '../../app/report/json.ts';
import { reportDigest } from '../../app/report/signoff.ts';
import { expectDemoRoles, openApp, screen } from './app-steps.ts';

const DEMO_CSV = 'sample-data/maple-row-demo.csv';
const V9_POLICY = 'sample-data/maple-row-v9-policy.csv';
// What the generator planted (sample-data/maple-row-demo.manifest.json): each defect names the check that should catch it.
const manifest = JSON.parse(readFileSync('sample-data/maple-row-demo.manifest.json', 'utf8')) as { defects: { kind: string }[] };
const CHECK_IDS = [
  'schema.roles', 'identity.duplicates', 'time.coverage', 'propensity.range', 'propensity.exploration', 'support.floor', 'support.target',
  'balance.weights', 'weights.ess', 'weights.tail', 'reward.validity', 'drift.reward', 'drift.policy', 'estimate.preview',
];
const STATUS_WORDS = /^(Pass|Warn|Fail|Not applicable|Informational|Not run)$/;

async function runToOverview(page: Page, screenshots: boolean): Promise<void> {
  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await expect(page.getByRole('heading', { name: 'Target policies and settings' })).toBeVisible();
  await page.locator('#target-table').setInputFiles(V9_POLICY);
  await expect(page.getByText('Policy table from maple-row-v9-policy.csv')).toBeVisible();
  if (screenshots) {
    await page.locator('.settings summary').click();
    await screen(page, '03-targets-and-thresholds');
  }
  await page.getByRole('button', { name: 'Run the audit' }).click();
  await expect(page.getByRole('heading', { name: 'Auditing the log…' })).toBeVisible();
  if (screenshots) await screen(page, '04-run-progress');
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 90_000 });
}

test('the demo button opens the demo log, suggests its roles, and the audit finds it not supported', async ({ page }) => {
  test.setTimeout(180_000);
  await openApp(page);
  await screen(page, '01-open');

  await page.getByRole('button', { name: 'Open the demo log' }).click();
  await expectDemoRoles(page);
  await screen(page, '02-roles');

  await runToOverview(page, true);
  await expect(page.locator('[data-verdict="not-supported"]').first()).toBeVisible();
  const shownStatus: Record<string, string> = {};
  for (const id of CHECK_IDS) {
    const row = page.locator(`tr[data-check="${id}"]`);
    await expect(row, id).toHaveCount(1);
    await expect(row.locator('.badge > span:last-child')).toHaveText(STATUS_WORDS);
    shownStatus[id] = (await row.locator('.badge > span:last-child').textContent()) ?? '';
  }
  await screen(page, '05-overview');

  await page.getByRole('button', { name: 'Details of Exploration by segment' }).click();
  await expect(page.getByRole('heading', { name: /Exploration by segment/ })).toBeVisible();
  await expect(page.getByText(/old-town/).first()).toBeVisible();
  await screen(page, '06-check-detail');

  const nav = page.getByRole('navigation', { name: 'Steps and results' });
  await nav.getByRole('button', { name: 'Segment map' }).click();
  await expect(page.locator('.map .chart svg').first()).toBeVisible();
  await screen(page, '07-segment-map');
  await page.getByRole('button', { name: 'Show as table (keyboard)' }).click();
  // The planted unexplored segment (manifest: old-town on web always shows free-delivery with propensity 1).
  await page.getByRole('button', { name: /^old-town · web · new, free-delivery:/ }).click();
  const detail = page.getByRole('complementary', { name: 'Selected cell' });
  await expect(detail.getByRole('heading', { name: 'old-town · web · new · free-delivery' })).toBeVisible();
  await expect(detail.getByText('propensity.exploration').first()).toBeVisible();
  await expect(detail.locator('pre').first()).toContainText(`"region" = 'old-town'`);
  await detail.scrollIntoViewIfNeeded();
  await screen(page, '08-segment-cell', false);

  for (const [name, heading, file] of [
    ['Weights & support', 'Weights and support', '09-weights'],
    ['Drift', 'Drift over time', '10-drift'],
    ['Estimates', 'Estimate preview', '11-estimates'],
  ] as const) {
    await nav.getByRole('button', { name }).click();
    await expect(page.getByRole('heading', { name: heading, level: 1 })).toBeVisible();
    await screen(page, file);
  }
  await expect(page.locator('.estimates-table tbody tr')).toHaveCount(1);

  await nav.getByRole('button', { name: 'Sign-off' }).click();
  await page.getByRole('textbox', { name: 'Reviewer' }).fill('R. Okafor');
  await page.getByLabel(/Reject/).check();
  await page.getByRole('textbox', { name: 'Note' }).fill('Exploration gap in old-town web; propensities missing on android days 9–10.');
  await page.getByRole('button', { name: 'Record the sign-off' }).click();
  await expect(page.getByRole('heading', { name: 'Signed' })).toBeVisible();
  await screen(page, '12-signoff');
  const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export signed report JSON' }).click()]);
  const exported = JSON.parse(readFileSync(await download.path(), 'utf8')) as Record<string, unknown> & {
    signoff: { reviewer: string; decision: string; digest: string };
    checks: { id: string; status: string; findings: unknown[] }[];
  };
  expect(exported.schema).toBe('counterweight.report/1');
  expect(validateReport(exported).errors).toEqual([]);
  expect(exported.verdict).toBe('not-supported');
  expect(exported.signoff).toMatchObject({ reviewer: 'R. Okafor', decision: 'reject' });
  // one vocabulary (app/charts/labels.ts): a skipped check does not apply; the estimate preview, where it passes, is informational
  const WORD = { pass: 'Pass', warn: 'Warn', fail: 'Fail', skipped: 'Not applicable' } as Record<string, string>;
  for (const c of exported.checks) expect(shownStatus[c.id], `${c.id} shown as in the report`).toBe(c.id === 'estimate.preview' && c.status === 'pass' ? 'Informational' : WORD[c.status]);
  // Every planted defect shows in the check the manifest names: a warn/fail status, or findings under a passing threshold.
  for (const defect of manifest.defects) {
    const check = exported.checks.find((c) => c.id === defect.kind);
    expect(check && (check.status !== 'pass' || check.findings.length > 0), `planted ${defect.kind}`).toBe(true);
  }
  // The page hashes in its own SHA-256; node:crypto (app/report/signoff.ts) must agree on the exported text.
  expect(exported.signoff.digest).toBe(reportDigest(exported));

  await nav.getByRole('button', { name: 'Open a log' }).click();
  await expect(page.getByText('maple-row-demo.csv').first()).toBeVisible();
  await screen(page, '13-open-with-recent');
});

test('a log chosen with the file picker opens on the roles screen with the demo roles suggested', async ({ page }) => {
  await page.goto('/');
  await page.getByTestId('log-file-input').setInputFiles(DEMO_CSV);
  await expectDemoRoles(page);
});

test('cancelling a running audit returns to the settings with the log still open', async ({ page }) => {
  test.setTimeout(120_000);
  await page.goto('/');
  await page.getByRole('button', { name: 'Open the demo log' }).click();
  await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 60_000 });
  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await page.getByRole('button', { name: 'Run the audit' }).click();
  await page.getByRole('button', { name: 'Cancel the audit' }).click();
  await expect(page.getByRole('heading', { name: 'Target policies and settings' })).toBeVisible();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toHaveCount(0);
  await page.getByRole('button', { name: 'Run the audit' }).click();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 90_000 });
});

test('the open screen works from the keyboard alone', async ({ page }) => {
  await page.goto('/');
  const demo = page.getByRole('button', { name: 'Open the demo log' });
  for (let i = 0; i < 20 && !(await demo.evaluate((el) => el === document.activeElement)); i++) await page.keyboard.press('Tab');
  await expect(demo).toBeFocused();
  const outline = await demo.evaluate((el) => getComputedStyle(el).outlineStyle);
  expect(outline).not.toBe('none');
  await page.keyboard.press('Enter');
  await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 60_000 });
});
