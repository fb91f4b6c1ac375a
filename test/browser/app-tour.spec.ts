/**
 * Every screen of the app, standalone web mode, on two weeks of a generated log whose columns are named its own
 * way (the room-booking app of test/fixtures/role-logs.ts): each check's detail screen, the segment map at every
 * layer with a cell's rows drilled into, Remedies, Compare (the second week against the first week's report) and
 * History (both reports). Every screen passes an axe accessibility run with no serious violations (WCAG 2.2 AA).
 * With CW_SHOT_DIR set, each screen is also saved there at 1280×800, as seen and as a whole page, to look at.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { BOOKING_SPEC, roleLog } from '../fixtures/role-logs.ts';
import { exportedReportText, noSeriousViolations, openApp } from './app-steps.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'cw-tour-'));
const WEEK1 = path.join(dir, 'harbour-stays-week1.csv');
const WEEK2 = path.join(dir, 'harbour-stays-week2.csv');
writeFileSync(WEEK1, roleLog(BOOKING_SPEC, 30_000, 21).csv);
writeFileSync(WEEK2, roleLog({ ...BOOKING_SPEC, epsilon: 0.1 }, 30_000, 23).csv);

/** A count of four or more digits without its thousands separator (dates and times excepted). */
const RAW_COUNT = /(?<![\d.,:-])\d{4,}(?![\d.:-])/;

let shotNumber = 0;
/** axe on the screen as it is; with CW_SHOT_DIR set, the screen saved first (viewport and whole page). */
async function look(page: Page, name: string): Promise<void> {
  const out = process.env.CW_SHOT_DIR;
  if (out) {
    const file = `${String(++shotNumber).padStart(2, '0')}-${name.toLowerCase().replace(/[^a-z0-9]+/g, '-')}`;
    await page.screenshot({ path: path.join(out, `${file}.png`) });
    await page.screenshot({ path: path.join(out, `${file}-full.png`), fullPage: true });
  }
  await noSeriousViolations(page, name);
}

test.use({ actionTimeout: 30_000 });

const nav = (page: Page) => page.getByRole('navigation', { name: 'Steps and results' });

async function audit(page: Page, log: string): Promise<void> {
  await page.getByTestId('log-file-input').setInputFiles(log);
  await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 60_000 });
  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await page.locator('#always-action').selectOption('upgrade');
  await page.getByRole('button', { name: 'Add', exact: true }).first().click();
  await page.getByRole('button', { name: 'Run the audit' }).click();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 90_000 });
}

test('every screen on a booking log with unseen column names passes axe', async ({ page }) => {
  test.setTimeout(600_000); // about 5 minutes on a loaded 2-core machine
  await openApp(page);
  await audit(page, WEEK1);
  const week1Report = path.join(dir, 'week1.json');
  writeFileSync(week1Report, await exportedReportText(page));
  await nav(page).getByRole('button', { name: 'Overview' }).click();
  await look(page, 'overview');
  // counts with a thousands separator everywhere, nouns by count ("no places", never "0 place(s)")
  await expect(page.locator('.verdict-card')).toContainText('30,000 rows from harbour-stays-week1.csv');
  const everyCheck = page.locator('table.checks-table');
  await expect(everyCheck).toContainText('All 30,000 propensities lie in (0, 1].');
  await expect(everyCheck).toContainText('no places with cells under the floor');
  await expect(everyCheck).not.toContainText('(s)');
  await expect(everyCheck).not.toContainText(RAW_COUNT);

  // each check's detail screen
  const ids = await page.locator('table.checks-table tbody tr').evaluateAll((rows) => rows.map((r) => r.getAttribute('data-check') ?? ''));
  expect(ids.length).toBeGreaterThan(10);
  for (const id of ids) {
    await page.locator(`tr[data-check="${id}"]`).getByRole('button', { name: /^Details of / }).click();
    await expect(page.locator('#check-title')).toBeVisible();
    await look(page, `check ${id}`);
    // the step list highlights the open check, not Overview
    await expect(nav(page).locator('[aria-current="page"]')).toHaveCount(1);
    await expect(nav(page).locator('[aria-current="page"]')).not.toHaveText(/^Overview/);
    await expect(nav(page).locator('[aria-current="page"]')).toHaveText(await page.locator('#check-title').evaluate((h) => h.firstChild?.textContent?.trim() ?? ''));
    // each setting used with its value; shares among the numbers as percents; example-row headers as in the log
    for (const item of await page.locator('ul.settings-used li').allTextContents()) expect(item).toMatch(/^[a-z_.]+ = \S/);
    await expect(page.locator('main .lead')).not.toContainText(RAW_COUNT);
    for (const value of await page.locator('main table.metrics td').allInnerTexts()) expect(value).not.toMatch(RAW_COUNT);
    for (const row of await page.locator('table.metrics tr').all()) {
      const label = await row.locator('th').innerText();
      if (/^Share|as a share/.test(label)) await expect(row.locator('td')).toHaveText(/%$/);
    }
    const heads = page.getByTestId('example-rows').first().locator('thead th');
    if (await heads.count()) {
      expect(await heads.first().evaluate((th) => getComputedStyle(th).textTransform)).toBe('none');
      expect(await heads.allInnerTexts()).toContain('shown_chance');
    }
    await page.getByRole('button', { name: '← Overview' }).click();
  }

  // the segment map, each layer, then one cell's rows from the table view
  await nav(page).getByRole('button', { name: 'Segment map' }).click();
  const layers = page.getByRole('group', { name: 'Map to show' }).getByRole('button');
  const layerCount = (await layers.count()) - 1; // the last button switches chart and table
  for (let i = 0; i < layerCount; i++) {
    await layers.nth(i).click();
    await look(page, `segment map layer ${i + 1}`);
  }
  // the readiness table: failing and warning segments first, the 60 passing ones folded away, then scrolling
  await expect(page.getByTestId('readiness-table')).toHaveCount(0); // every segment passes on this log
  await page.getByRole('button', { name: 'Show 60 passing segments' }).click();
  await expect(page.getByTestId('readiness-table').locator('tbody tr')).toHaveCount(60);
  expect((await page.locator('.readiness-scroll').boundingBox())?.height ?? 9999).toBeLessThan(600);
  await layers.nth(0).click();
  await page.getByRole('button', { name: 'Show as table (keyboard)' }).click();
  await look(page, 'segment map table');
  const cellButton = page.getByRole('button', { name: /^harbour · business · phone, upgrade:/ });
  // the table prints a cell as the chart's label does (two decimals), and the cell panel says the same
  const cellText = (await cellButton.innerText()).trim();
  expect(cellText).toMatch(/^\d\.\d\d$/);
  await cellButton.click();
  await expect(page.getByTestId('cell-value')).toHaveText(cellText);
  // the panel is not cut at the map's height: everything it holds is shown, with no scroll inside it
  const panel = page.getByRole('complementary', { name: 'Selected cell' });
  expect(await panel.evaluate((e) => e.scrollHeight - e.clientHeight)).toBeLessThanOrEqual(1);
  const rows = page.locator('section.cell-rows');
  await expect(rows.getByRole('heading', { name: 'Rows behind harbour · business · phone · upgrade' })).toBeVisible();
  await expect(rows.locator('.pager-row:not(.loading)').first()).toBeVisible({ timeout: 30_000 });
  await look(page, 'drill-down');
  await rows.scrollIntoViewIfNeeded();
  await look(page, 'drill-down rows');

  for (const screen of ['Weights & support', 'Drift', 'Estimates', 'Remedies', 'Edit a target', 'Sign-off']) {
    await nav(page).getByRole('button', { name: screen, exact: true }).click();
    await expect(page.locator('main h1').first()).toBeVisible();
    await look(page, screen);
  }

  // the second week, compared with the first week's report
  await nav(page).getByRole('button', { name: 'Open a log' }).click();
  await audit(page, WEEK2);
  const week2Report = path.join(dir, 'week2.json');
  writeFileSync(week2Report, await exportedReportText(page));
  await nav(page).getByRole('button', { name: 'Compare' }).click();
  await look(page, 'compare before a baseline');
  await page.getByTestId('baseline-file-input').setInputFiles(week1Report);
  await expect(page.getByRole('heading', { name: /^What got worse/ })).toBeVisible();
  await look(page, 'compare');

  await nav(page).getByRole('button', { name: 'History' }).click();
  await expect(page.getByRole('heading', { name: 'Audit history' })).toBeVisible();
  await look(page, 'history before reports');
  await page.getByTestId('history-file-input').setInputFiles([week1Report, week2Report]);
  await expect(page.getByTestId('history-verdicts').locator('tbody tr')).toHaveCount(2);
  await look(page, 'history');
});
