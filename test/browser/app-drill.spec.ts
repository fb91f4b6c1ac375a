/**
 * Row drill-down from the segment map, in hosted mode (native engine behind the WebSocket, demo Parquet)
 * and in standalone mode (DuckDB-Wasm in the page, demo CSV): the (old-town, web) × free-delivery cell's
 * rows are counted, drawn a few at a time, fetched page by page as the table scrolls, and end with the
 * same row as the same query run by the native engine in this process.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type Locator, type Page } from '@playwright/test';
import { DRILL_PAGE_ROWS, drillCountSql, drillPageSql, drillSql, parseDrillCount } from '../../app/core/scan/drill.ts';
import { rowObjects, type Cell } from '../../app/core/table.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { newToken } from '../../scripts/web/access.ts';
import { createHostedServer, type HostedServer } from '../../scripts/web/hosted-server.ts';
import { formatValue } from '../../renderer/format.ts';
import { demoLog, PARQUET_ROWS } from './large-logs.ts';

const ROOT = process.cwd();
const SAMPLE = path.join(ROOT, 'sample-data');
import { PAGE_ORIGIN } from './page-origin.ts';

// The generator's record of the unexplored cell (sample-data/maple-row-demo.manifest.json).
const manifest = JSON.parse(readFileSync(path.join(SAMPLE, 'maple-row-demo.manifest.json'), 'utf8')) as { defects: { kind: string; segment: Record<string, string>; action?: string; rows_affected?: number }[] };
const cell = manifest.defects.find((d) => d.kind === 'propensity.exploration');

interface Expected {
  /** the cell's rows in drill order, read by the native engine here: the rows the page must end with */
  readonly rows: Record<string, Cell>[];
  /** rows of the region alone and of the device alone: what a drift.policy finding on either selects */
  readonly wider: number[];
  /** the cell's rows logged under policy version v8 */
  readonly v8: number;
}

async function nativeRows(file: string): Promise<Expected> {
  const engine = await createNativeEngine();
  try {
    const src = await engine.register({ kind: 'path', paths: [file] });
    const roles = { time: 'logged_at', decision_id: 'decision_id', action: 'promotion' };
    const rows = rowObjects(await engine.query(drillSql({ relation: src.relation, roles, selection: { segment: cell?.segment ?? {}, action: cell?.action ?? null } })));
    const wider = await engine.query(`SELECT count(*) FILTER (WHERE region = 'old-town')::DOUBLE, count(*) FILTER (WHERE device = 'web')::DOUBLE FROM ${src.relation}`);
    return { rows, wider: wider.columns.map((c) => Number(c[0])), v8: rows.filter((r) => r.policy_version === 'v8').length };
  } finally {
    await engine.close();
  }
}

/** A cell's value as the pager writes it into the cell's title: the value as logged. */
function raw(v: Cell | undefined): string | null {
  if (v === null || v === undefined) return null;
  return typeof v === 'string' ? v : String(v);
}

async function runAudit(page: Page): Promise<void> {
  await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 60_000 });
  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await page.getByRole('button', { name: 'Run the audit' }).click();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 90_000 });
}

async function openCell(page: Page): Promise<Locator> {
  await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'Segment map' }).click();
  // Regroup by region × device (from the cube, no scan) so the map has the manifest's two-column cell.
  await page.getByTestId('group-by-tenure').uncheck();
  // the regrouped map opens on exploration shares; the cell's row count is on the rows layer
  await page.getByRole('group', { name: 'Map to show' }).getByRole('button', { name: /^rows by / }).click();
  await page.getByRole('button', { name: 'Show as table (keyboard)' }).click();
  await page.getByRole('button', { name: new RegExp(`^${cell?.segment.region} · ${cell?.segment.device}, ${cell?.action}:`) }).click();
  const section = page.locator('section.cell-rows');
  await expect(section.getByRole('heading', { name: `Rows behind old-town · web · free-delivery` })).toBeVisible();
  return section;
}

async function rowsFetched(box: Locator, first: number, last: number): Promise<void> {
  for (const i of [first, last]) await expect(box.locator(`.pager-row[data-row="${i}"]:not(.loading)`)).toHaveCount(1, { timeout: 30_000 });
}

async function checkDrill(page: Page, { rows: expected, wider }: Expected, shot: string): Promise<void> {
  const section = await openCell(page);
  const total = expected.length;
  expect(total).toBe(cell?.rows_affected);
  // The map's own count for the cell (from the cube) and the pager's count (from the engine) agree.
  await expect(page.getByRole('button', { name: new RegExp(`^old-town · web, free-delivery: ${formatValue(total)}$`) })).toBeVisible();
  await expect(section.getByTestId('row-count')).toHaveAttribute('data-rows', String(total));
  await expect(section.getByTestId('row-count')).toHaveText(`${formatValue(total)} rows`);

  const box = section.getByRole('table', { name: /^Rows behind/ });
  await rowsFetched(box, 0, 5);
  const header = await box.getByRole('columnheader').allTextContents();
  expect(header).toEqual(['#', ...Object.keys(expected[0] ?? {}).filter((c) => !c.startsWith('cw:'))]);
  const drawn = await box.locator('.pager-row').count();
  expect(drawn).toBeGreaterThan(5);
  expect(drawn, 'rows in the DOM').toBeLessThan(60);
  await section.scrollIntoViewIfNeeded();
  await screen(page, `${shot}-top`);

  // Straight to the end: the last page is fetched without the ones before it.
  const started = Date.now();
  await box.evaluate((el) => { el.scrollTop = el.scrollHeight; });
  // Usually taken before the last page has arrived: the rows not yet fetched are drawn as placeholders.
  await screen(page, `${shot}-jump`);
  await rowsFetched(box, total - 1, total - 1);
  const jump = Date.now() - started;
  expect(await box.locator('.pager-row').count(), 'rows in the DOM at the end').toBeLessThan(60);
  await expectRowIs(box, total - 1, expected);
  await screen(page, `${shot}-end`);

  // From the top down, a page at a time: each page is fetched after the one before it, and every row drawn is the cell's.
  await box.evaluate((el) => { el.scrollTop = 0; });
  const perPage: number[] = [];
  for (let first = 0; first < total; first += DRILL_PAGE_ROWS) {
    const t0 = Date.now();
    await box.evaluate((el, px) => { el.scrollTop = px; }, first * 28);
    const last = Math.min(total - 1, first + 8);
    await rowsFetched(box, first, last);
    perPage.push(Date.now() - t0);
    for (const column of ['region', 'device', 'promotion']) {
      const values = new Set(await box.locator(`.pager-row:not(.loading) [data-column="${column}"]`).allTextContents());
      expect([...values], column).toEqual([{ region: 'old-town', device: 'web', promotion: 'free-delivery' }[column]]);
    }
    await expectRowIs(box, first, expected);
  }
  await box.evaluate((el) => { el.scrollTop = el.scrollHeight; });
  await rowsFetched(box, total - 1, total - 1);
  await expectRowIs(box, total - 1, expected);
  const median = [...perPage].sort((a, b) => a - b)[Math.floor(perPage.length / 2)];
  console.log(`${shot}: ${total} rows; jump to the end ${jump} ms; ${perPage.length} pages in order, median ${median} ms, max ${Math.max(...perPage)} ms from scroll to drawn`);

  // From the keyboard: the table takes focus and End reaches the last row.
  await box.evaluate((el) => { el.scrollTop = 0; });
  await box.focus();
  await expect(box).toBeFocused();
  await page.keyboard.press('End');
  await rowsFetched(box, total - 1, total - 1);

  // A finding of the cell lists its own rows: drift.policy here is about all of old-town, or all of web.
  await section.getByRole('button', { name: /^Finding: drift\.policy/ }).first().click();
  const count = section.getByTestId('row-count');
  await expect(count).not.toHaveAttribute('data-rows', String(total));
  expect(wider).toContain(Number(await count.getAttribute('data-rows')));
  await rowsFetched(box, 0, 5);
  await section.getByRole('button', { name: 'This cell' }).click();
  await expect(count).toHaveAttribute('data-rows', String(total));
}

async function expectRowIs(box: Locator, i: number, expected: Record<string, Cell>[]): Promise<void> {
  const row = box.locator(`.pager-row[data-row="${i}"]`);
  const want = expected[i] ?? {};
  for (const [column, value] of Object.entries(want)) {
    if (column.startsWith('cw:')) continue;
    const shown = row.locator(`[data-column="${column}"]`);
    if (raw(value) === null) await expect(shown, `row ${i} ${column}`).toHaveText('null');
    else await expect(shown, `row ${i} ${column}`).toHaveAttribute('title', raw(value) as string);
  }
}

async function screen(page: Page, name: string): Promise<void> {
  await page.screenshot({ path: `test-results/screens/${name}.png`, fullPage: false });
}

test.describe.serial('row drill-down, hosted mode on the demo Parquet log', () => {
  let server: HostedServer;
  let token = '';

  test.beforeAll(async () => {
    token = newToken();
    server = await createHostedServer({ port: 0, token, origin: PAGE_ORIGIN, logFolders: [SAMPLE] });
  });
  test.afterAll(async () => { await server?.close(); });

  test('the (old-town, web) free-delivery cell lists its rows, paged from the host', async ({ page }) => {
    test.setTimeout(150_000);
    const expected = await nativeRows(path.join(SAMPLE, 'maple-row-demo.parquet'));
    await page.setViewportSize({ width: 1280, height: 800 });
    await page.goto(`/#host=${encodeURIComponent(server.socketUrl)}&token=${token}`);
    await page.getByTestId('log-file-input').setInputFiles(path.join(SAMPLE, 'maple-row-demo.parquet'));
    await runAudit(page);
    await checkDrill(page, expected, '30-drill-hosted');

    // Kept to one policy version, the map's cell and its rows both count that version's rows only.
    expect(expected.v8).toBeGreaterThan(0);
    expect(expected.v8).toBeLessThan(expected.rows.length);
    await page.getByTestId('segment-map-version').selectOption('v8');
    await page.getByRole('group', { name: 'Map to show' }).getByRole('button', { name: /^rows by / }).click();
    await page.getByRole('button', { name: `old-town · web, free-delivery: ${formatValue(expected.v8)}` }).click();
    const section = page.locator('section.cell-rows');
    await expect(section.getByRole('heading', { name: 'Rows behind old-town · web · free-delivery (policy version v8)' })).toBeVisible();
    await expect(section.getByTestId('row-count')).toHaveAttribute('data-rows', String(expected.v8));
    const box = section.getByRole('table', { name: /^Rows behind/ });
    await rowsFetched(box, 0, 5);
    expect(new Set(await box.locator('.pager-row:not(.loading) [data-column="policy_version"]').allTextContents())).toEqual(new Set(['v8']));
  });
});

test('row drill-down, standalone mode on the demo CSV: the same cell lists its rows from the Wasm engine', async ({ page }) => {
  test.setTimeout(180_000);
  const expected = await nativeRows(path.join(SAMPLE, 'maple-row-demo.csv'));
  await page.setViewportSize({ width: 1280, height: 800 });
  await page.goto('/');
  await page.getByTestId('log-file-input').setInputFiles(path.join(SAMPLE, 'maple-row-demo.csv'));
  await runAudit(page);
  await checkDrill(page, expected, '31-drill-web');
});

test.describe('row drill-down on a 10M-row log (CW_LARGE=1)', () => {
  test.skip(!process.env.CW_LARGE, 'large-log tests run with CW_LARGE=1 (npm run test:browser)');

  test('a cell of several hundred thousand rows scrolls to its end in a scaled scroll box, fetching only the pages shown', async ({ page }) => {
    // the log app-large.spec.ts also reads: generated here when the cache does not hold it yet (several minutes)
    test.setTimeout(1_500_000);
    const LARGE_PARQUET = await demoLog(PARQUET_ROWS, 'parquet');
    const engine = await createNativeEngine();
    let total = 0;
    let last: Record<string, Cell> = {};
    try {
      const src = await engine.register({ kind: 'path', paths: [LARGE_PARQUET] });
      const spec = { relation: src.relation, roles: { time: 'logged_at', decision_id: 'decision_id', action: 'promotion' }, selection: { segment: cell?.segment ?? {}, action: cell?.action ?? null } };
      total = parseDrillCount(await engine.query(drillCountSql(spec)));
      last = rowObjects(await engine.query(drillPageSql(spec, { offset: total - 1, limit: 1 })))[0] ?? {};
    } finally {
      await engine.close();
    }
    const token = newToken();
    const server = await createHostedServer({ port: 0, token, origin: PAGE_ORIGIN, logFolders: [path.dirname(LARGE_PARQUET)] });
    try {
      await page.setViewportSize({ width: 1280, height: 800 });
      await page.goto(`/#host=${encodeURIComponent(server.socketUrl)}&token=${token}`);
      // Hosted mode opens a log by its bare file name inside a --logs folder (README, security section).
      await page.locator('#log-paths').fill(path.basename(LARGE_PARQUET));
      await page.getByRole('button', { name: 'Open', exact: true }).click();
      await runAudit(page);
      const section = await openCell(page);
      await expect(section.getByTestId('row-count')).toHaveAttribute('data-rows', String(total), { timeout: 30_000 });
      const box = section.getByRole('table', { name: /^Rows behind/ });
      await rowsFetched(box, 0, 5);
      const height = await box.evaluate((el) => el.scrollHeight);
      expect(height, 'the scroll box is capped, not rows × row height').toBeLessThan(total * 28);
      for (const at of [0.5, 1]) {
        const t0 = Date.now();
        await box.evaluate((el, f) => { el.scrollTop = f * el.scrollHeight; }, at);
        const row = Math.min(total - 1, at === 1 ? total - 1 : Math.floor(at * total));
        await expect(box.locator('.pager-row:not(.loading)').first()).toBeVisible({ timeout: 60_000 });
        if (at === 1) await rowsFetched(box, row, row);
        console.log(`10M log, ${total} rows in the cell: jump to ${at * 100}% drawn in ${Date.now() - t0} ms`);
      }
      expect(await box.locator('.pager-row').count()).toBeLessThan(60);
      await expectRowIs(box, total - 1, Object.assign([], { [total - 1]: last }) as Record<string, Cell>[]);
      await section.scrollIntoViewIfNeeded();
      await screen(page, '32-drill-10m-end');
    } finally {
      await server.close();
    }
  });
});
