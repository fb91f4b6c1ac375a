/** Steps through the app that several specs take the same way: the audit of an opened log, the report's export, axe. */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import AxeBuilder from '@axe-core/playwright';
import { expect, type Page } from '@playwright/test';

/** The demo's candidate policy table (sample-data/). */
export const V9_POLICY = path.join(process.cwd(), 'sample-data', 'maple-row-v9-policy.csv');

/**
 * From the Columns screen of an opened log: Next, the v9 policy table as target, Run, until the overview shows.
 * `onColumns` runs on the Columns screen before Next (a spec's look at the suggested roles).
 */
export async function auditWithV9Table(page: Page, onColumns?: () => Promise<void>): Promise<void> {
  await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 60_000 });
  await onColumns?.();
  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await page.locator('#target-table').setInputFiles(V9_POLICY);
  await expect(page.getByText('Policy table from maple-row-v9-policy.csv')).toBeVisible();
  await page.getByRole('button', { name: 'Run the audit' }).click();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 120_000 });
}

/** The report JSON as the Sign-off screen exports it (the page stays on Sign-off). */
export async function exportedReportText(page: Page): Promise<string> {
  await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'Sign-off' }).click();
  const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export report JSON' }).click()]);
  return readFileSync(await download.path(), 'utf8');
}

/** axe on the page as it is: no serious or critical violation of WCAG 2.2 AA. */
export async function noSeriousViolations(page: Page, screen: string): Promise<void> {
  const result = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'wcag22aa']).analyze();
  const serious = result.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  expect(serious.map((v) => `${v.id}: ${v.help} (${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join('; ')})`), `axe on ${screen}`).toEqual([]);
}
