/** The browser engine (DuckDB-Wasm in a worker) gives the Node suite's answers for files picked in a page. */
import { expect, test } from '@playwright/test';
import type { Page } from '@playwright/test';
import { decodeTable } from '../../app/engine/host/codec.ts';
import type { WireTable } from '../../app/engine/host/messages.ts';
import type { RegisteredSource } from '../../app/engine/types.ts';
import { ENGINE_CASES, rowsOf } from '../engine/cases.ts';
import { writeFixtures } from '../engine/fixtures.ts';
import type { FixtureName, Fixtures } from '../engine/fixtures.ts';

type Answer<T> = { ok: true; value: T; ms: number } | { ok: false; code: string; message: string; ms: number };

let fixtures: Fixtures;
test.beforeAll(async () => { fixtures = await writeFixtures(); });
test.afterAll(() => fixtures?.remove());

async function openHarness(page: Page): Promise<void> {
  await page.goto('/engine-harness.html');
  await expect(page.locator('#status')).toHaveText('ready', { timeout: 30_000 });
}

async function pick(page: Page, fixture: FixtureName): Promise<Answer<RegisteredSource>> {
  await page.setInputFiles('#file', fixtures.paths[fixture]);
  return page.evaluate(() => {
    const input = document.getElementById('file') as HTMLInputElement;
    return window.cwEngineHarness!.registerFile(input.files![0]!);
  }) as Promise<Answer<RegisteredSource>>;
}

async function query(page: Page, sql: string): Promise<Answer<WireTable>> {
  return page.evaluate((text) => window.cwEngineHarness!.query(text), sql) as Promise<Answer<WireTable>>;
}

for (const fixture of ['csv', 'tsv', 'csv.gz', 'parquet'] as const) {
  test(`a picked ${fixture} file answers every engine case as the Node engines do`, async ({ page }) => {
    await openHarness(page);
    const registered = await pick(page, fixture);
    expect(registered.ok, JSON.stringify(registered)).toBe(true);
    if (!registered.ok) return;
    for (const c of ENGINE_CASES) {
      const answer = await query(page, c.sql(registered.value.relation));
      expect(answer.ok, `${c.name}: ${JSON.stringify(answer)}`).toBe(true);
      if (!answer.ok) continue;
      const table = decodeTable(answer.value);
      expect(table.names, c.name).toEqual(c.names);
      expect(table.types, c.name).toEqual(c.types);
      expect(rowsOf(table), c.name).toEqual(c.rows);
    }
    const scans = await page.evaluate(() => window.cwEngineHarness!.sourceScans());
    expect(scans).toBe(ENGINE_CASES.length);
  });
}

for (const fixture of ['ndjson'] as const) {
  test(`a picked ${fixture} file fails fast with the plain message`, async ({ page }) => {
    await openHarness(page);
    const registered = await pick(page, fixture);
    expect(registered.ok).toBe(false);
    if (registered.ok) return;
    expect(registered.code).toBe('extension-unavailable');
    expect(registered.message).toMatch(/desktop app.*native engine.*headless command/s);
    expect(registered.ms).toBeLessThan(2000);
  });
}

// The hostile corpus (test/corpus/cases.ts) states native DuckDB's messages for these files; picked in
// the page they must read the same, naming the file as picked.
for (const [file, words] of [
  ['truncated.parquet', [/"truncated\.parquet"/, /not a complete Parquet file/, /cut short/]],
  ['csv-named.parquet', [/"csv-named\.parquet"/, /not a complete Parquet file/, /starts like plain text/, /rename it to \.csv/]],
] as const) {
  test(`a picked ${file} gets the native engine's message`, async ({ page }) => {
    await openHarness(page);
    await page.setInputFiles('#file', `test/corpus/files/${file}`);
    const registered = await page.evaluate(() => window.cwEngineHarness!.registerFile((document.getElementById('file') as HTMLInputElement).files![0]!)) as Answer<RegisteredSource>;
    expect(registered.ok).toBe(false);
    if (registered.ok) return;
    expect(registered.code).toBe('io');
    for (const w of words) expect(registered.message).toMatch(w);
  });
}
