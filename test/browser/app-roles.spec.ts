/**
 * Standalone web mode on a generated log whose columns are named its own way (an invented room-booking app,
 * test/fixtures/role-logs.ts): the suggested roles must be right with no edits, the Targets screen offers the
 * log's actions to choose from, and every screen passes an axe accessibility run with no serious violations.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { BOOKING_SPEC, roleLog } from '../fixtures/role-logs.ts';
import { everyControlByKeyboard, noSeriousViolations, openApp } from './app-steps.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'cw-booking-'));
const LOG = path.join(dir, 'harbour-stays.csv');
writeFileSync(LOG, roleLog(BOOKING_SPEC, 30_000, 21).csv);
/** Large enough that the audit stays on the Run screen while axe reads it. */
const BIG_LOG = path.join(dir, 'harbour-stays-season.csv');
writeFileSync(BIG_LOG, roleLog(BOOKING_SPEC, 600_000, 22).csv);

/** With CW_SHOT_DIR set, each screen is also saved there at 1280×800 (to look at; nothing compares them). */
async function shot(page: Page, name: string): Promise<void> {
  const dir = process.env.CW_SHOT_DIR;
  if (dir) await page.screenshot({ path: path.join(dir, `${name.toLowerCase().replace(/[^a-z0-9]+/g, '-')}.png`) });
}

/** axe on the screen as it is, after saving it (above). */
async function accessible(page: Page, screen: string): Promise<void> {
  await shot(page, screen);
  await noSeriousViolations(page, screen);
}

test('a booking log with unseen column names: roles right with no edits, actions picked from the log, accessible screens', async ({ page }) => {
  test.setTimeout(180_000);
  await openApp(page);
  await accessible(page, 'open');
  await page.getByTestId('log-file-input').setInputFiles(LOG);
  await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 60_000 });
  // the generator's ground truth: offer_id is the action (named like an id, 5 values), evt the opaque event id
  await expect(page.locator('#role-action')).toHaveValue('offer_id');
  await expect(page.locator('#role-decision_id')).toHaveValue('evt');
  await expect(page.locator('#role-propensity')).toHaveValue('shown_chance');
  await expect(page.locator('#role-reward')).toHaveValue('tapped');
  await expect(page.locator('#role-time')).toHaveValue('happened');
  await expect(page.locator('#role-policy_version')).toHaveValue('policy_tag');
  for (const segment of ['city_zone', 'guest_kind', 'platform']) await expect(page.locator(`#segment-${segment}`)).toBeChecked();
  await accessible(page, 'columns');
  // the action's reason: one or two plain sentences with the numbers, the formula behind a disclosure
  const actionReason = page.locator('tr:has(#role-action) td.reason');
  await expect(actionReason).toContainText(/^Weighted by 1\/propensity, each of its 5 values adds up to the number of rows \(within \d+%\)/);
  const formula = page.getByText(/weight balance holds: \(1\/n\) Σ 1\{A=a\}\/p is within 0\.\d\d of 1 for all 5 values/);
  await expect(formula).toBeHidden();
  // one sentence, about five lines of the narrow column with its disclosure (the formula text took eight and more)
  expect((await actionReason.boundingBox())?.height ?? 999).toBeLessThan(150);
  await actionReason.getByText('How this was decided').click();
  await expect(formula).toBeVisible();
  await everyControlByKeyboard(page, 'columns');

  // operated from the keyboard: a rare role set and set back to none keeps its section open and the focus on it
  const rare = page.locator('#role-target_propensity');
  await rare.focus();
  await page.keyboard.press('ArrowDown');
  await expect(rare).not.toHaveValue('');
  await page.keyboard.press('ArrowUp');
  await expect(rare).toHaveValue('');
  await expect(rare).toBeFocused();
  await expect(page.locator('details.more-roles')).toHaveAttribute('open', '');
  // an id column far from unique is refused (chosen by typing its name on the select)
  await page.locator('#role-decision_id').focus();
  await page.keyboard.type('city_zone');
  await expect(page.locator('#role-decision_id')).toHaveValue('city_zone');
  await expect(page.getByText(/decision id column 'city_zone' is far from unique/)).toBeVisible();
  await expect(page.getByRole('button', { name: 'Next: targets and thresholds' })).toBeDisabled();
  await expect(page.locator('#role-decision_id')).toBeFocused();
  await page.waitForTimeout(1_100); // a select's type-to-find joins keys less than a second apart
  await page.keyboard.type('evt');
  await expect(page.locator('#role-decision_id')).toHaveValue('evt');
  await page.locator('#segment-city_zone').focus();
  await page.keyboard.press('Space');
  await expect(page.locator('#segment-city_zone')).toBeChecked();

  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await expect(page.getByRole('heading', { name: 'Target policies and settings' })).toBeVisible();
  const offered = await page.locator('#always-action option').allTextContents();
  expect(offered.slice(1).sort()).toEqual([...BOOKING_SPEC.action.values].map(String).sort());
  await page.locator('#always-action').selectOption('upgrade');
  await page.getByRole('button', { name: 'Add', exact: true }).first().click();
  await expect(page.getByText('Always choose “upgrade”')).toBeVisible();
  // the same target once the action column is another one: refused, with the list of that column's values
  const steps = page.getByRole('navigation', { name: 'Steps and results' });
  await steps.getByRole('button', { name: /Columns$/ }).click();
  await page.locator('#role-action').selectOption('platform');
  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await expect(page.getByText('The log has no action “upgrade”; its actions are “desktop”, “phone”, “tablet”. Remove the target or choose another action.')).toBeVisible();
  await expect(page.getByRole('button', { name: 'Run the audit' })).toBeDisabled();
  await steps.getByRole('button', { name: /Columns$/ }).click();
  await page.locator('#role-action').selectOption('offer_id');
  await page.locator('#segment-platform').check();
  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await expect(page.getByText(/The log has no action/)).toHaveCount(0);
  await accessible(page, 'targets');
  await everyControlByKeyboard(page, 'targets');
  await page.getByRole('button', { name: 'Run the audit' }).click();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 90_000 });
  await accessible(page, 'overview');
  await everyControlByKeyboard(page, 'overview');
  const nav = page.getByRole('navigation', { name: 'Steps and results' });
  for (const name of ['Segment map', 'Weights & support', 'Drift', 'Estimates', 'Edit a target', 'Sign-off']) {
    await nav.getByRole('button', { name }).click();
    await accessible(page, name);
    await everyControlByKeyboard(page, name);
  }
  await expect(page.getByRole('heading', { name: 'Sign-off: your decision on this log' })).toBeVisible();

  // the HTML report is exported from the page
  const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export HTML report' }).click()]);
  expect(download.suggestedFilename()).toMatch(/\.html$/);

  // browser back and forward move between screens; the screen is in the URL
  await page.goBack();
  expect(page.url()).toMatch(/#\/edit$/);
  await expect(page.getByRole('heading', { name: 'Edit a target policy' })).toBeVisible();
  await page.goBack();
  await expect(page.getByRole('heading', { name: 'Estimate preview', level: 1 })).toBeVisible();
  await page.goForward();
  await expect(page.getByRole('heading', { name: 'Edit a target policy' })).toBeVisible();
  expect(page.url()).toMatch(/#\/edit$/);

  // going back to "Open a log" keeps the audit
  await nav.getByRole('button', { name: 'Open a log' }).click();
  await expect(page.getByText(/Still open: harbour-stays\.csv/)).toBeVisible();
  await accessible(page, 'open with an audit');
  await page.getByRole('button', { name: 'Back to it' }).click();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible();
  const verdict = await page.locator('.verdict-line').first().innerText();

  // a reload keeps the audit, on the screen the URL names
  await page.reload();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 30_000 });
  expect(page.url()).toMatch(/#\/overview$/);
  expect(await page.locator('.verdict-line').first().innerText()).toBe(verdict);
  await nav.getByRole('button', { name: 'Drift' }).click();
  await page.reload();
  await expect(page.getByRole('heading', { name: 'Drift over time', level: 1 })).toBeVisible({ timeout: 30_000 });
  await page.goBack();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible();
  await nav.getByRole('button', { name: 'Open a log' }).click();
  await expect(page.getByText(/Still open: harbour-stays\.csv/)).toBeVisible();
});

test('the Run screen says stage k of n, the share of the audit done and the time left, and passes axe while it runs', async ({ page }) => {
  test.setTimeout(240_000);
  await openApp(page);
  await page.getByTestId('log-file-input').setInputFiles(BIG_LOG);
  await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 120_000 });
  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await page.getByRole('button', { name: 'Run the audit' }).click();
  await expect(page.getByRole('heading', { name: 'Auditing the log…' })).toBeVisible();
  const line = page.getByTestId('run-progress');
  await expect(line).toHaveText(/^Stage [1-4] of 4 · (Profile|Cube|Tails|Checks)( · this pass has read \d+% of the log)? · \d+% of the audit done · (estimating the time left|about \d+ (s|min) left|almost done)$/);
  await accessible(page, 'run');
  // axe read the Run screen while the audit ran (not the overview after it)
  await expect(page.getByRole('heading', { name: 'Auditing the log…' })).toBeVisible();
  // the stage moves on, in order, and the share done never goes back
  const seen: { stage: number; share: number }[] = [];
  while (await page.getByRole('heading', { name: 'Auditing the log…' }).isVisible()) {
    const text = await line.innerText().catch(() => '');
    const m = /^Stage (\d) of 4.* (\d+)% of the audit done/.exec(text);
    if (m) seen.push({ stage: Number(m[1]), share: Number(m[2]) });
    await page.waitForTimeout(100);
  }
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 180_000 });
  expect(seen.length).toBeGreaterThan(0);
  expect(seen.every((p, i) => i === 0 || (p.stage >= (seen[i - 1] as { stage: number }).stage && p.share >= (seen[i - 1] as { share: number }).share))).toBe(true);
  expect(new Set(seen.map((p) => p.stage)).size).toBeGreaterThan(1);
});
