/**
 * The weight-balance z map on the demo log, whose logging policy never shows six of the seven promotions in
 * old-town × web (sample-data/maple-row-demo.manifest.json): a never-logged cell is blank in the page and null
 * with its reason in the exported JSON; no sentinel number (±99) stands in for it anywhere.
 */
import path from 'node:path';
import { expect, test } from '@playwright/test';
import { auditWithV9Table, exportedReportText } from './app-steps.ts';

const DEMO_CSV = path.join(process.cwd(), 'sample-data', 'maple-row-demo.csv');
const SENTINEL = /^[−-]?99(\.0+)?$/;

test('the z map has no ±99 in the page or the JSON: never-logged cells are blank, and null with a reason', async ({ page }) => {
  test.setTimeout(240_000);
  await page.setViewportSize({ width: 1280, height: 800 });
  await page.goto('/');
  await page.getByTestId('log-file-input').setInputFiles(DEMO_CSV);
  await auditWithV9Table(page);

  await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'Segment map' }).click();
  await page.getByRole('group', { name: 'Map to show' }).getByRole('button', { name: /^balance z by / }).click();
  await page.getByRole('button', { name: 'Show as table (keyboard)' }).click();
  const cells = (await page.locator('.heat-table td button').allTextContents()).map((t) => t.trim());
  expect(cells.length).toBeGreaterThan(400);
  expect(cells.filter((t) => SENTINEL.test(t))).toEqual([]);
  // each old-town · web row: the six promotions never logged there are blank, free-delivery has a z
  const oldTownWeb = page.locator('.heat-table tbody tr').filter({ has: page.locator('th', { hasText: /^old-town · web/ }) });
  expect(await oldTownWeb.count()).toBeGreaterThan(0);
  const header = (await page.locator('.heat-table thead th').allTextContents()).slice(1);
  for (const texts of await Promise.all((await oldTownWeb.all()).map((r) => r.locator('td button').allTextContents()))) {
    expect(header.filter((_, j) => texts[j]?.trim() === '—').sort()).toEqual(header.filter((a) => a !== 'free-delivery').sort());
  }

  const report = JSON.parse(await exportedReportText(page)) as { checks: { id: string; series?: { kind: string; values: (number | null)[][]; null_reasons?: (string | null)[][] }[] }[] };
  const z = report.checks.find((c) => c.id === 'balance.weights')?.series?.find((s) => s.kind === 'heatmap');
  expect(z).toBeDefined();
  const values = z!.values.flat();
  expect(values.filter((v) => v === null).length).toBeGreaterThanOrEqual(6);
  expect(values.filter((v) => v !== null && Math.abs(Math.abs(v) - 99) < 1e-9)).toEqual([]);
  z!.values.forEach((row, i) => row.forEach((v, j) => {
    if (v === null) expect(z!.null_reasons?.[i]?.[j], `reason for the null cell ${i}, ${j}`).toMatch(/^(never logged|not tested|below ε)$/);
  }));
});
