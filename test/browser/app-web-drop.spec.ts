/**
 * Standalone web mode (DuckDB-Wasm in a worker): a log dropped on the page, and an audit cancelled while
 * its one scan (the cube) is running.
 */
import { expect, test, type Page } from '@playwright/test';
import { dropServedLog } from './app-steps.ts';

test.describe.serial('standalone web mode: drop and cancel', () => {
  let page: Page;
  test.beforeAll(async ({ browser }) => { page = await browser.newPage({ viewport: { width: 1280, height: 800 } }); });
  test.afterAll(async () => { await page?.close(); });

  test('a CSV log dropped on the page opens on the roles screen with the demo roles suggested', async () => {
    await page.goto('/');
    await dropServedLog(page, '/sample-data/maple-row-demo.csv', 'text/csv');
    await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 60_000 });
    // sample-data/README.md: the demo's action is `promotion`, its propensity `propensity`, its time `logged_at`.
    await expect(page.locator('#role-action')).toHaveValue('promotion');
    await expect(page.locator('#role-propensity')).toHaveValue('propensity');
    await expect(page.locator('#role-time')).toHaveValue('logged_at');
    await expect(page.getByText('maple-row-demo.csv').first()).toBeVisible();
  });

  test('cancelling during the cube stage returns to the settings with nothing shown as a result, and a new run finishes', async () => {
    test.setTimeout(120_000);
    await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
    // The cube stage lasts under a second on the demo log, so the page itself presses Cancel the moment it starts.
    await page.evaluate(() => {
      const w = window as unknown as { cancelledDuring?: string };
      const observer = new MutationObserver(() => {
        const working = document.querySelector('.stage-working .stage-title')?.textContent;
        if (working !== 'Cube') return;
        observer.disconnect();
        w.cancelledDuring = working;
        [...document.querySelectorAll('button')].find((b) => b.textContent === 'Cancel the audit')?.click();
      });
      observer.observe(document.body, { subtree: true, childList: true, attributes: true });
    });
    const cancelledAt = Date.now();
    await page.getByRole('button', { name: 'Run the audit' }).click();
    await expect.poll(() => page.evaluate(() => (window as unknown as { cancelledDuring?: string }).cancelledDuring), { timeout: 30_000 }).toBe('Cube');
    await expect(page.getByRole('heading', { name: 'Target policies and settings' })).toBeVisible();
    expect(Date.now() - cancelledAt).toBeLessThan(10_000);

    // Nothing of the cancelled run is offered as a result: no overview, and every result view disabled.
    const nav = page.getByRole('navigation', { name: 'Steps and results' });
    await expect(page.getByRole('heading', { name: 'Audit overview' })).toHaveCount(0);
    for (const name of ['Overview', 'Segment map', 'Weights & support', 'Drift', 'Estimates', 'Edit a target', 'Sign-off']) {
      await expect(nav.getByRole('button', { name }), name).toBeDisabled();
    }
    await expect(page.getByRole('alert')).toHaveCount(0);

    // The engine is usable again: the same log runs to a verdict.
    await page.getByRole('button', { name: 'Run the audit' }).click();
    await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 90_000 });
    await expect(page.locator('.verdict-card [data-verdict="not-supported"]')).toBeVisible();
  });

  test('the segment map regroups by device alone from the cube, with the counts of the full map', async () => {
    await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'Segment map' }).click();
    await page.getByRole('button', { name: 'Show as table (keyboard)' }).click();
    const full = page.locator('.heat-table tbody tr');
    await expect(full).toHaveCount(72);
    await page.getByTestId('group-by-region').uncheck();
    await page.getByTestId('group-by-tenure').uncheck();
    const rows = page.locator('.heat-table tbody tr th');
    await expect(rows).toHaveText(['android', 'ios', 'web']);
    // The worker that scanned the log holds the cube as table `cube`; the regroup is SQL over it.
    await expect(page.locator('section[aria-labelledby="segments-title"]')).toHaveAttribute('data-regroup-source', 'cube-sql');
    // old-town · web is greedy (free-delivery only): regrouped by region and device it is one row with one non-zero cell
    await page.getByTestId('group-by-region').check();
    // the regrouped map opens on exploration shares, as the report's map; the row counts are their own layer
    await page.getByRole('group', { name: 'Map to show' }).getByRole('button', { name: /^rows by / }).click();
    const row = page.locator('.heat-table tbody tr', { has: page.locator('th', { hasText: /^old-town · web$/ }) });
    await expect(row.locator('td button')).toHaveText(['0', '4,851', '0', '0', '0', '0', '0'].map((v) => new RegExp(`^${v}$`)));
  });
});
