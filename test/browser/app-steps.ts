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

/**
 * Tab, from the top of the screen's main area, reaches every control in it that is shown and enabled, and in the
 * order the screen reads (document order: each control reached follows the one before it). A closed disclosure is
 * opened from the keyboard when Tab reaches its summary (Enter), and the controls it shows must then be reached too.
 */
export async function everyControlByKeyboard(page: Page, screen: string): Promise<void> {
  await page.evaluate(() => {
    for (const e of document.querySelectorAll('[data-reached]')) e.removeAttribute('data-reached');
    document.getElementById('main')?.focus();
  });
  const outOfOrder: string[] = [];
  for (let step = 0; step < 500; step++) {
    await page.keyboard.press('Tab');
    const at = await page.evaluate((step) => {
      const e = document.activeElement as HTMLElement | null;
      const main = document.getElementById('main');
      if (!e || !main || e === main || !main.contains(e)) return null;
      const before = document.querySelector(`[data-reached="${step - 1}"]`);
      const inOrder = !before || Boolean(before.compareDocumentPosition(e) & Node.DOCUMENT_POSITION_FOLLOWING);
      e.setAttribute('data-reached', String(step));
      const details = e.tagName === 'SUMMARY' ? (e.parentElement as HTMLDetailsElement) : null;
      return { inOrder, label: (e.getAttribute('aria-label') ?? e.id) || (e.textContent ?? '').trim().slice(0, 40), closed: details !== null && !details.open };
    }, step);
    if (at === null) break;
    if (!at.inOrder) outOfOrder.push(at.label);
    if (at.closed) {
      await page.keyboard.press('Enter');
      await expect(page.locator(`[data-reached="${step}"]`).locator('xpath=..'), `Enter opens "${at.label}" on ${screen}`).toHaveAttribute('open', '');
    }
  }
  const missed = await page.evaluate(() =>
    [...document.querySelectorAll<HTMLElement>('#main :is(button, a[href], input, select, textarea, summary, [tabindex="0"])')]
      .filter((e) => !(e as HTMLButtonElement).disabled && e.tabIndex >= 0 && e.checkVisibility({ visibilityProperty: true }))
      .filter((e) => !(e instanceof HTMLInputElement && e.type === 'radio' && !e.checked))
      .filter((e) => !e.hasAttribute('data-reached'))
      .map((e) => `${e.tagName.toLowerCase()} "${(e.getAttribute('aria-label') ?? e.id) || (e.textContent ?? '').trim().slice(0, 40)}"`));
  expect(missed, `controls of ${screen} not reached by Tab`).toEqual([]);
  expect(outOfOrder, `controls of ${screen} reached out of reading order`).toEqual([]);
}

/** axe on the page as it is: no serious or critical violation of WCAG 2.2 AA. */
export async function noSeriousViolations(page: Page, screen: string): Promise<void> {
  const result = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'wcag22aa']).analyze();
  const serious = result.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  expect(serious.map((v) => `${v.id}: ${v.help} (${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join('; ')})`), `axe on ${screen}`).toEqual([]);
}

/** The open screen at 1280×800. */
export async function openApp(page: Page): Promise<void> {
  await page.setViewportSize({ width: 1280, height: 800 });
  await page.goto('/');
  await expect(page.getByRole('heading', { name: 'Open a decision log' })).toBeVisible();
}

/** A screenshot into test-results/screens/. */
export async function screen(page: Page, name: string, fullPage = true): Promise<void> {
  await page.screenshot({ path: `test-results/screens/${name}.png`, fullPage });
}

/** The Columns screen suggests the demo log's roles (sample-data/README.md names its columns). */
export async function expectDemoRoles(page: Page, timeout = 60_000): Promise<void> {
  await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout });
  // the action is `promotion`, rewards are `ordered` or `basket_value`
  await expect(page.locator('#role-action')).toHaveValue('promotion');
  await expect(page.locator('#role-propensity')).toHaveValue('propensity');
  await expect(page.locator('#role-reward')).toHaveValue(/^(ordered|basket_value)$/);
  await expect(page.locator('#role-time')).toHaveValue('logged_at');
  for (const segment of ['region', 'device', 'tenure']) await expect(page.locator(`#segment-${segment}`)).toBeChecked();
}

/**
 * Drops a file the dev server serves (`/sample-data/...`) on the log drop zone. The File is built in the page from
 * the served bytes, as a file manager's drop hands one over; the zone must show it is ready before the drop.
 */
export async function dropServedLog(page: Page, url: string, type: string): Promise<void> {
  const dataTransfer = await page.evaluateHandle(async ({ url, type }) => {
    const blob = await (await fetch(url)).blob();
    const dt = new DataTransfer();
    dt.items.add(new File([blob], url.slice(url.lastIndexOf('/') + 1), { type }));
    return dt;
  }, { url, type });
  const zone = page.getByTestId('log-drop-zone');
  await zone.dispatchEvent('dragover', { dataTransfer });
  await expect(zone).toHaveClass(/dropzone-active/);
  await zone.dispatchEvent('drop', { dataTransfer });
}
