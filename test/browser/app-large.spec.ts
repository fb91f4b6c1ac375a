/**
 * Large logs: a 5M-row CSV and a 10M-row Parquet log audited in standalone web mode from a lazily read
 * File handle, with the page's and the workers' JavaScript heaps sampled throughout (a log read into memory
 * would show up there), and the 10M-row Parquet log audited through hosted mode. The logs come from the demo generator and are cached
 * in the system temp folder, keyed by row count, so reruns skip generating them.
 */
import { statSync } from 'node:fs';
import path from 'node:path';
import { expect, test, type CDPSession, type Page } from '@playwright/test';
import { newToken } from '../../scripts/web/access.ts';
import { createHostedServer } from '../../scripts/web/hosted-server.ts';
import { demoLog, PARQUET_ROWS } from './large-logs.ts';

const CSV_ROWS = Number(process.env.CW_LARGE_CSV_ROWS ?? 5_000_000);
import { PAGE_ORIGIN } from './page-origin.ts';

interface HeapUsage { usedSize: number; backingStorageSize?: number }

interface Peak { raw: number; live: number; liveHeap: number; liveBacking: number }

/**
 * Samples V8 heap use (Runtime.getHeapUsage: the JS heap plus ArrayBuffer backing stores) of the page and
 * of every worker it starts, through one CDP session auto-attached to them. Each sample is taken twice: as
 * found ("raw", which includes garbage not yet collected, such as file slices already copied into the
 * engine) and after a forced collection ("live": what the thread still holds).
 */
async function heapSampler(page: Page): Promise<{ sample(): Promise<void>; every(ms: number, after?: () => void): () => Promise<void>; peaks: Map<string, Peak> }> {
  const cdp: CDPSession = await page.context().newCDPSession(page);
  const workers = new Map<string, string>();
  const pending = new Map<number, (v: unknown) => void>();
  let next = 1_000_000;
  cdp.on('Target.attachedToTarget', (e: { sessionId: string; targetInfo: { type: string; url: string } }) => {
    if (e.targetInfo.type === 'worker') workers.set(e.sessionId, /duckdb/.test(e.targetInfo.url) ? 'duckdb worker' : /digest/.test(e.targetInfo.url) ? 'digest worker' : /decode/.test(e.targetInfo.url) ? 'parquet decode worker' : 'other worker');
  });
  cdp.on('Target.detachedFromTarget', (e: { sessionId: string }) => { workers.delete(e.sessionId); });
  cdp.on('Target.receivedMessageFromTarget', (e: { message: string }) => {
    const m = JSON.parse(e.message) as { id?: number; result?: unknown };
    if (m.id !== undefined) pending.get(m.id)?.(m.result ?? null);
  });
  await cdp.send('Target.setAutoAttach', { autoAttach: true, waitForDebuggerOnStart: false, flatten: false });
  const inWorker = (sessionId: string, method: string) => new Promise<unknown>((resolve) => {
    const id = ++next;
    const timer = setTimeout(() => { pending.delete(id); resolve(null); }, 5000);
    pending.set(id, (v) => { clearTimeout(timer); pending.delete(id); resolve(v); });
    cdp.send('Target.sendMessageToTarget', { sessionId, message: JSON.stringify({ id, method }) }).catch(() => resolve(null));
  });
  const peaks = new Map<string, Peak>();
  const bytes = (h: HeapUsage) => h.usedSize + (h.backingStorageSize ?? 0);
  const note = (who: string, raw: HeapUsage | null, live: HeapUsage | null) => {
    if (!raw || !live) return;
    const p = peaks.get(who) ?? { raw: 0, live: 0, liveHeap: 0, liveBacking: 0 };
    peaks.set(who, {
      raw: Math.max(p.raw, bytes(raw)),
      live: Math.max(p.live, bytes(live)),
      liveHeap: Math.max(p.liveHeap, live.usedSize),
      liveBacking: Math.max(p.liveBacking, live.backingStorageSize ?? 0),
    });
  };
  const sample = async (): Promise<void> => {
    const raw = (await cdp.send('Runtime.getHeapUsage').catch(() => null)) as HeapUsage | null;
    await cdp.send('HeapProfiler.collectGarbage').catch(() => null);
    note('page', raw, (await cdp.send('Runtime.getHeapUsage').catch(() => null)) as HeapUsage | null);
    for (const [sessionId, who] of [...workers]) {
      const r = (await inWorker(sessionId, 'Runtime.getHeapUsage')) as HeapUsage | null;
      await inWorker(sessionId, 'HeapProfiler.collectGarbage');
      note(who, r, (await inWorker(sessionId, 'Runtime.getHeapUsage')) as HeapUsage | null);
    }
  };
  return {
    peaks,
    sample,
    /** Samples every `ms` (then calls `after`) until the returned stop is awaited; stopping twice is harmless. */
    every(ms, after) {
      let sampling = true;
      const loop = (async () => { while (sampling) { await sample(); after?.(); await new Promise((r) => setTimeout(r, ms)); } })();
      return async () => { sampling = false; await loop; };
    },
  };
}

const MB = 1024 * 1024;
const mb = (v: number) => `${(v / MB).toFixed(1)} MB`;

/** The demo log of this many rows (generated once, then cached), with when its generation started and ended. */
async function timedDemoLog(rows: number, format: 'csv' | 'parquet'): Promise<{ file: string; started: number; generated: number }> {
  const started = Date.now();
  const file = await demoLog(rows, format);
  return { file, started, generated: Date.now() };
}

/** Stops the sampling and takes a last sample; both the page's and the engine worker's heaps must have been seen. */
async function lastPeaks(heap: Awaited<ReturnType<typeof heapSampler>>, stop: () => Promise<void>): Promise<Record<string, string>> {
  await stop();
  await heap.sample();
  expect(heap.peaks.get('page')?.live, 'the page heap was sampled').toBeGreaterThan(0);
  expect(heap.peaks.get('duckdb worker')?.live, 'the engine worker heap was sampled').toBeGreaterThan(0);
  return peakHeaps(heap.peaks);
}

/** Each thread's peak heaps, written out for the log line. */
function peakHeaps(peaks: ReadonlyMap<string, Peak>): Record<string, string> {
  return Object.fromEntries([...peaks].map(([k, v]) => [k, `raw ${mb(v.raw)}, live ${mb(v.live)} (heap ${mb(v.liveHeap)}, array buffers ${mb(v.liveBacking)})`]));
}

/** From the Columns screen of an opened demo log to the overview of its audit: not supported, all its rows read. */
async function auditToOverview(page: Page, rows: number, timeout: number): Promise<void> {
  await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
  await page.getByRole('button', { name: 'Run the audit' }).click();
  await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout });
  await expect(page.locator('.verdict-card [data-verdict="not-supported"]')).toBeVisible();
  await expect(page.locator('.verdict-card')).toContainText(`${(rows * 1.003).toLocaleString('en')} rows`);
}

test.describe.serial('large logs @large', () => {
  test.skip(!process.env.CW_LARGE, 'set CW_LARGE=1 to audit the 5M-row CSV and the 10M-row Parquet log');

  test(`a ${(CSV_ROWS / 1e6).toFixed(0)}M-row CSV audits in standalone web mode with the file never held in the page's or the workers' heaps`, async ({ page }) => {
    test.setTimeout(600_000);
    const { file, started, generated } = await timedDemoLog(CSV_ROWS, 'csv');
    const size = statSync(file).size;
    const heap = await heapSampler(page);
    const stop = heap.every(2000);
    try {
      await page.goto('/');
      await page.getByTestId('log-file-input').setInputFiles(file);
      await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 300_000 });
      const opened = Date.now();
      await expect(page.locator('#role-action')).toHaveValue('promotion');
      await auditToOverview(page, CSV_ROWS, 540_000);
      const done = Date.now();
      const peaks = await lastPeaks(heap, stop);
      console.log(`${CSV_ROWS} rows, ${(size / MB).toFixed(0)} MB CSV: generate/cache ${((generated - started) / 1000).toFixed(1)} s, open ${((opened - generated) / 1000).toFixed(1)} s, audit ${((done - opened) / 1000).toFixed(1)} s; peak heaps ${JSON.stringify(peaks)}`);
      // Holding the log in memory would need at least its size; what each thread holds stays under a quarter of it.
      for (const [who, p] of heap.peaks) expect(p.live, `${who} peak live heap`).toBeLessThan(0.25 * size);
    } finally {
      await stop();
    }
  });

  test('a 10M-row Parquet log audits in standalone web mode, read row group by row group, with every thread\'s live JS heap below the file size and far below its decoded columns', async ({ page }) => {
    test.setTimeout(600_000);
    const { file, started, generated } = await timedDemoLog(PARQUET_ROWS, 'parquet');
    const size = statSync(file).size;
    const heap = await heapSampler(page);
    await page.goto('/');
    await expect(page.getByRole('heading', { name: 'Open a decision log' })).toBeVisible();
    // The app's own heaps before any log is opened: a 62 MB file is smaller than the page's React app,
    // so what is held to account is what the log adds to each thread.
    await heap.sample();
    const before = new Map([...heap.peaks].map(([who, p]) => [who, p.liveHeap]));
    heap.peaks.clear();
    // The engine's worker starts when the log is opened: its baseline is its heap when first seen (DuckDB-Wasm's
    // own module code, about 35 MB, at most a row group in flight by then).
    const noteFirst = () => { for (const [who, p] of heap.peaks) if (!before.has(who)) before.set(who, p.liveHeap); };
    const stop = heap.every(2000, noteFirst);
    try {
      await page.getByTestId('log-file-input').setInputFiles(file);
      await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 300_000 });
      const opened = Date.now();
      // Reading the file happens while it is opened (footer, then row group by row group into DuckDB-Wasm).
      await heap.sample();
      const whileOpening = new Map([...heap.peaks].map(([who, p]) => [who, p.liveHeap]));
      await expect(page.locator('#role-action')).toHaveValue('promotion');
      await auditToOverview(page, PARQUET_ROWS, 480_000);
      const done = Date.now();
      const peaks = await lastPeaks(heap, stop);
      console.log(`${PARQUET_ROWS} rows, ${(size / MB).toFixed(0)} MB Parquet in standalone web mode: generate/cache ${((generated - started) / 1000).toFixed(1)} s, open (load) ${((opened - generated) / 1000).toFixed(1)} s, audit ${((done - opened) / 1000).toFixed(1)} s; live JS heap before opening ${JSON.stringify(Object.fromEntries([...before].map(([k, v]) => [k, mb(v)])))}; peak heaps ${JSON.stringify(peaks)}`);
      // The decoded columns (about 0.9 GB of Arrow for this log, 14 times the file) live in DuckDB-Wasm's own
      // memory. What JavaScript holds while the file is read is one append piece in flight (four DuckDB row
      // groups, about 30 MB of Arrow here: APPEND_ROWS in app/engine/parquet/load.ts) and the row group being
      // decoded, whatever the file's size; a sample may or may not catch a piece in flight (under load it
      // did: +31.7 MB), so the bound sits above one piece and below the file itself, which a log read into
      // memory would need at least, and far below its decoded columns.
      for (const [who, peak] of whileOpening) expect(peak - (before.get(who) ?? 0), `${who}: live JS heap added while reading the log`).toBeLessThan(0.6 * size);
      // Afterwards the page also holds the audit's results (report, cube cells, charts), which do not grow with
      // the rows; these peaks include the opening's, and stay under the file's size.
      for (const [who, p] of heap.peaks) expect(p.liveHeap - (before.get(who) ?? 0), `${who}: live JS heap added by the log and its audit`).toBeLessThan(0.75 * size);
    } finally {
      await stop();
    }
  });

  test('a 10M-row Parquet log audits through hosted mode', async ({ page }) => {
    test.setTimeout(600_000);
    const { file, started, generated } = await timedDemoLog(PARQUET_ROWS, 'parquet');
    const token = newToken();
    const server = await createHostedServer({ port: 0, token, origin: PAGE_ORIGIN, logFolders: [path.dirname(file)] });
    try {
      await page.goto(`/#host=${encodeURIComponent(server.socketUrl)}&token=${token}`);
      await page.getByTestId('log-file-input').setInputFiles(file);
      await expect(page.getByRole('heading', { name: 'Which column is which?' })).toBeVisible({ timeout: 120_000 });
      const opened = Date.now();
      await auditToOverview(page, PARQUET_ROWS, 480_000);
      console.log(`${PARQUET_ROWS} rows Parquet via hosted mode: generate/cache ${((generated - started) / 1000).toFixed(1)} s, open ${((opened - generated) / 1000).toFixed(1)} s, audit ${((Date.now() - opened) / 1000).toFixed(1)} s`);
    } finally {
      await server.close();
    }
  });
});
