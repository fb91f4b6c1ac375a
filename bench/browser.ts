/**
 * Web mode in Debian Chromium: the renderer's engine harness page (DuckDB-Wasm in a Web Worker,
 * the log read lazily from a picked File) loads the log and runs the whole audit inside the page, as the
 * app's renderer does (CW_BENCH_AUDIT=node: the pure part in this process, each result crossing page.evaluate).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { access, readdir, readFile } from 'node:fs/promises';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runAudit, type TargetInput } from '../app/core/audit.ts';
import type { Table } from '../app/core/table.ts';
import { decodeTable } from '../app/engine/host/codec.ts';
import type { WireTable } from '../app/engine/host/messages.ts';
import type { HarnessAudit } from '../renderer/engine-harness.ts';
import type { MeasureResult, MeasureSpec } from './measure.ts';
import { stageOf } from './stage-label.ts';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const CHROMIUM = '/usr/bin/chromium';
const PORT = Number(process.env.CW_BENCH_PORT ?? 5191);
const PAGE = `http://127.0.0.1:${PORT}/engine-harness.html`;

/**
 * CPU seconds (user + system, /proc/<pid>/stat) of every live process below this one: the Vite server, Chromium
 * and its renderer, GPU and utility processes (the page, the DuckDB worker and the decode worker are threads of
 * the renderer). Read while they run, because /usr/bin/time never sees them: Chromium's children are not all
 * waited for by a parent that this process waits for. Linux only; NaN elsewhere.
 */
async function descendantCpuSeconds(): Promise<number> {
  try {
    const parent = new Map<number, number>();
    const ticks = new Map<number, number>();
    for (const name of await readdir('/proc')) {
      if (!/^\d+$/.test(name)) continue;
      const stat = await readFile(`/proc/${name}/stat`, 'utf8').catch(() => '');
      // Fields after the command's closing parenthesis: state ppid ... utime (14th) stime (15th).
      const rest = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
      if (rest.length < 13) continue;
      parent.set(Number(name), Number(rest[1]));
      ticks.set(Number(name), Number(rest[11]) + Number(rest[12]));
    }
    let total = 0;
    for (const [pid, t] of ticks) {
      for (let p = parent.get(pid); p !== undefined && p > 1; p = parent.get(p)) {
        if (p === process.pid) { total += t; break; }
      }
    }
    return total / 100; // USER_HZ: 100 on Linux
  } catch {
    return NaN;
  }
}

type Answer<T> = { ok: true; value: T; ms: number } | { ok: false; code: string; message: string; ms: number };

/** Why web mode cannot be measured here, or null when it can. */
export async function browserUnavailable(): Promise<string | null> {
  try {
    await access(CHROMIUM);
  } catch {
    return `no Chromium at ${CHROMIUM}`;
  }
  try {
    await access(join(ROOT, 'renderer', 'engine-harness.html'));
    await access(join(ROOT, 'renderer', 'engine-harness.ts'));
  } catch {
    return 'the renderer has no engine harness page (renderer/engine-harness.html)';
  }
  return null;
}

async function startVite(): Promise<ChildProcess> {
  const vite = spawn(process.execPath, [join(ROOT, 'node_modules', 'vite', 'bin', 'vite.js'), '--host', '127.0.0.1', '--port', String(PORT), '--strictPort'], { cwd: ROOT, stdio: 'ignore' });
  const deadline = Date.now() + 60_000;
  while (Date.now() < deadline) {
    const ok = await fetch(PAGE).then((r) => r.ok, () => false);
    if (ok) return vite;
    await new Promise((r) => setTimeout(r, 250));
  }
  vite.kill();
  throw new Error('the Vite dev server did not serve the engine harness within 60 s');
}

export async function measureInBrowser(spec: MeasureSpec, targets: TargetInput[]): Promise<MeasureResult> {
  const { chromium } = await import('@playwright/test');
  const vite = await startVite();
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'] });
  try {
    const page = await browser.newPage();
    const cdp = await page.context().newCDPSession(page);
    await cdp.send('Performance.enable');
    let peakHeap = 0;
    const sample = async () => {
      const { metrics } = await cdp.send('Performance.getMetrics');
      peakHeap = Math.max(peakHeap, metrics.find((m) => m.name === 'JSHeapUsedSize')?.value ?? 0);
    };
    const sampler = setInterval(() => { sample().catch(() => undefined); }, 200);
    try {
      await page.goto(PAGE);
      await page.waitForFunction(() => document.getElementById('status')?.textContent !== 'starting', undefined, { timeout: 120_000 });
      const status = await page.textContent('#status');
      if (status !== 'ready') throw new Error(`the engine harness did not start: ${status}`);
      await page.setInputFiles('#file', spec.file);
      const cpuBefore = await descendantCpuSeconds();
      const opening = performance.now();
      const registered = await page.evaluate(() => {
        const input = document.getElementById('file') as HTMLInputElement;
        return window.cwEngineHarness!.registerFile(input.files![0]!);
      }) as Answer<{ relation: string; format: string }>;
      if (!registered.ok) throw new Error(`${registered.code}: ${registered.message}`);
      // A Parquet log is loaded into DuckDB-Wasm when it is opened (app/engine/parquet/): part of every audit of it.
      const openSeconds = registered.value.format === 'parquet' ? (performance.now() - opening) / 1000 : 0;
      const load = await page.evaluate(() => window.cwEngineHarness!.lastParquetLoad());
      const loadSplit = load ? Object.entries(load).map(([k, v]) => `${k} ${k === 'appends' ? v : (v / 1000).toFixed(2)}`).join(', ') : '';
      // The audit runs inside the page, as the app's renderer runs it (queries and pure part); only a few numbers
      // of the report and each statement's time come back. CW_BENCH_AUDIT=node runs the pure part in this process
      // instead, every statement's result crossing page.evaluate (the bench's way before; bench/NOTES.md compares).
      const inNode = process.env.CW_BENCH_AUDIT === 'node';
      // Seconds per audit statement of the last audit (DuckDB-Wasm's own time).
      let stages: [string, number][] = [];
      // Node mode: seconds the audit's queries took as this process sees them (the page's answer through CDP included).
      let roundTrips = 0;
      const run = async (sql: string): Promise<Table> => {
        const t0 = performance.now();
        const answer = await page.evaluate((text) => window.cwEngineHarness!.query(text), sql) as Answer<WireTable>;
        stages.push([stageOf(sql), answer.ms / 1000]);
        if (!answer.ok) throw new Error(`${answer.code}: ${answer.message}`);
        const table = decodeTable(answer.value);
        roundTrips += (performance.now() - t0) / 1000;
        return table;
      };
      const { relation, format } = registered.value;
      const audit = async (): Promise<{ verdict: string; rows: number; ess: number; maxWeight: number }> => {
        if (inNode) {
          const report = await runAudit(run, { relation, input: { files: [], format }, engine: 'wasm-browser', targets });
          const t = report.targets[0];
          return { verdict: report.verdict, rows: report.input.rows, ess: t?.ess ?? NaN, maxWeight: t?.max_weight ?? NaN };
        }
        const answer = await page.evaluate(([r, f, ts]) => window.cwEngineHarness!.audit(r, f, ts), [relation, format, targets] as const) as Answer<HarnessAudit>;
        if (!answer.ok) throw new Error(`${answer.code}: ${answer.message}`);
        stages = answer.value.statements.map(([sql, ms]) => [stageOf(sql), ms / 1000]);
        return answer.value;
      };
      if (spec.warmup) await audit();
      const seconds: number[] = [];
      let last;
      for (let i = 0; i < spec.runs; i++) {
        const t0 = performance.now();
        stages = [];
        roundTrips = 0;
        last = await audit();
        seconds.push((performance.now() - t0) / 1000 + openSeconds);
      }
      await sample();
      const browserCpu = await descendantCpuSeconds() - cpuBefore;
      const statementsSeconds = stages.reduce((sum, [, v]) => sum + v, 0);
      return { seconds, answer: { verdict: last?.verdict ?? '', rows: last?.rows ?? NaN, ess: last?.ess ?? NaN, max_weight: last?.maxWeight ?? NaN, audit_in: inNode ? 'node' : 'page', ...(openSeconds ? { open_seconds: +openSeconds.toFixed(2) } : {}), ...(loadSplit ? { load_s: loadSplit } : {}), ...(inNode ? { queries_as_seen_s: +roundTrips.toFixed(2) } : {}), statements_sum_s: +statementsSeconds.toFixed(2), audit_besides_statements_s: +((seconds.at(-1) ?? NaN) - openSeconds - statementsSeconds).toFixed(2), browser_cpu_s: +browserCpu.toFixed(1), statements_s: stages.map(([n, v]) => `${n} ${v.toFixed(2)}`).join(', ') }, peakRssMb: NaN, peakHeapMb: process.memoryUsage().heapUsed / 2 ** 20, browserPeakHeapMb: peakHeap / 2 ** 20 };
    } finally {
      clearInterval(sampler);
    }
  } finally {
    await browser.close();
    vite.kill();
  }
}
