/**
 * Standalone web mode reads Parquet itself (app/engine/parquet/: the File read by range, row group by row
 * group through Arrow into DuckDB-Wasm): the demo Parquet log, picked and dropped, audits to the report the
 * headless command's engine (native DuckDB, in this Node process) gives for the same file and target.
 */
import { readFileSync } from 'node:fs';
import { expect, test, type Page } from '@playwright/test';
import { runAudit } from '../../app/core/audit.ts';
import type { Report } from '../../app/core/model/report.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { firstDifference } from '../core/audit-helpers.ts';
import { auditWithV9Table, dropServedLog, exportedReportText, V9_POLICY } from './app-steps.ts';

const DEMO_PARQUET = 'sample-data/maple-row-demo.parquet';
// The tolerance of test/core/engine-agreement.test.ts.
const TOLERANCE = 1e-12;

let headless: Report;
test.beforeAll(async () => {
  const engine = await createNativeEngine();
  try {
    const source = await engine.register({ kind: 'path', paths: [DEMO_PARQUET] });
    headless = await runAudit((sql) => engine.query(sql), {
      relation: source.relation, input: { files: [], format: source.format }, engine: engine.kind,
      // Named as the page names a table it was given as a File (no folder).
      targets: [{ spec: 'table:maple-row-v9-policy.csv', tableText: readFileSync(V9_POLICY, 'utf8') }],
    });
  } finally {
    await engine.close();
  }
});


async function auditAndExport(page: Page): Promise<Report> {
  await auditWithV9Table(page, () => expect(page.locator('#role-action')).toHaveValue('promotion'));
  return JSON.parse(await exportedReportText(page)) as Report;
}

function expectSameAudit(web: Report): void {
  expect(web.input.format).toBe('parquet');
  expect(web.input.rows).toBe(headless.input.rows);
  expect(web.run.engine).toBe('wasm-browser');
  expect(web.verdict).toBe(headless.verdict);
  expect(web.checks.map((c) => [c.id, c.status])).toEqual(headless.checks.map((c) => [c.id, c.status]));
  // Every target number: ESS, k̂, support deficit, IPS / SNIPS / DR with their intervals.
  expect(firstDifference(web.targets, headless.targets, TOLERANCE)).toBeNull();
  expect(web.targets.length).toBeGreaterThan(0);
}

test('the demo Parquet log chosen with the picker audits to the headless command\'s verdict, statuses and target numbers', async ({ page }) => {
  test.setTimeout(240_000);
  await page.goto('/');
  await expect(page.getByText('Parquet, or CSV or TSV')).toBeVisible();
  await page.getByTestId('log-file-input').setInputFiles(DEMO_PARQUET);
  expectSameAudit(await auditAndExport(page));
});

test('the demo Parquet log dropped on the page audits to the same report', async ({ page }) => {
  test.setTimeout(240_000);
  await page.goto('/');
  await dropServedLog(page, '/sample-data/maple-row-demo.parquet', 'application/vnd.apache.parquet');
  expectSameAudit(await auditAndExport(page));
});

test('a truncated Parquet file gets the native engine\'s message on the open screen', async ({ page }) => {
  await page.goto('/');
  await page.getByTestId('log-file-input').setInputFiles('test/corpus/files/truncated.parquet');
  const alert = page.getByRole('alert');
  // The engine starts when the first file is opened: seconds on a loaded machine.
  await expect(alert).toContainText('"truncated.parquet": it is not a complete Parquet file', { timeout: 60_000 });
  await expect(page.getByRole('heading', { name: 'Open a decision log' })).toBeVisible();
});
