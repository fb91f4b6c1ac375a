/**
 * Test page for the browser engine: exposes window.cwEngineHarness so Playwright can register a picked
 * file and run SQL. Results use the engine host's wire encoding so they cross page.evaluate unchanged.
 */
import ehWasm from '@duckdb/duckdb-wasm/dist/duckdb-eh.wasm?url';
import ehWorker from '@duckdb/duckdb-wasm/dist/duckdb-browser-eh.worker.js?url';
import { runAudit, type TargetInput } from '../app/core/audit.ts';
import { projectionOf } from '../app/engine/audit-hooks.ts';
import { encodeTable } from '../app/engine/host/codec.ts';
import type { WireTable } from '../app/engine/host/messages.ts';
import { EngineError } from '../app/engine/types.ts';
import type { RegisteredSource } from '../app/engine/types.ts';
import { createWasmBrowserEngine } from '../app/engine/wasm-browser.ts';
import type { LoadTimings } from '../app/engine/parquet/load.ts';

/** An audit run in the page, as the renderer runs it: a few numbers of the report and each statement's time. */
export interface HarnessAudit {
  verdict: string;
  rows: number;
  ess: number;
  maxWeight: number;
  /** every check as `id status`, the reasons as JSON (cut short) and the roles, to compare runs */
  checks: string[];
  reasons: string[];
  roles: string;
  /** each statement the audit sent, with DuckDB-Wasm's milliseconds for it (the text labels it in bench/) */
  statements: [sql: string, ms: number][];
}

export type HarnessAnswer<T> = { ok: true; value: T; ms: number } | { ok: false; code: string; message: string; ms: number };

export interface EngineHarness {
  registerFile(file: File | File[]): Promise<HarnessAnswer<RegisteredSource>>;
  query(sql: string): Promise<HarnessAnswer<WireTable>>;
  /**
   * The whole audit of a registered source inside the page (queries and pure part), as the app's renderer
   * runs it; only these numbers cross to the caller.
   */
  audit(relation: string, format: string, targets: TargetInput[]): Promise<HarnessAnswer<HarnessAudit>>;
  sourceScans(): number;
  /** Where the last Parquet load's time went (bench/browser.ts). */
  lastParquetLoad(): LoadTimings | null;
}

declare global {
  interface Window {
    cwEngineHarness?: EngineHarness;
  }
}

async function answer<T>(work: () => Promise<T>): Promise<HarnessAnswer<T>> {
  const started = performance.now();
  try {
    const value = await work();
    return { ok: true, value, ms: performance.now() - started };
  } catch (error) {
    const e = error instanceof EngineError ? error : new EngineError('internal', String(error));
    return { ok: false, code: e.code, message: e.message, ms: performance.now() - started };
  }
}

const status = document.getElementById('status') as HTMLElement;
try {
  let lastLoad: LoadTimings | null = null;
  const engine = await createWasmBrowserEngine({ bundles: { mainModule: ehWasm, mainWorker: ehWorker }, onParquetLoad: (t) => { lastLoad = t; } });
  window.cwEngineHarness = {
    registerFile: (file) => answer(() => engine.register({ kind: 'file', files: Array.isArray(file) ? file : [file] })),
    query: (sql) => answer(async () => encodeTable(await engine.query(sql))),
    audit: (relation, format, targets) => answer(async () => {
      const statements: [string, number][] = [];
      const timed = async <T>(label: string, work: () => Promise<T>): Promise<T> => {
        const t0 = performance.now();
        try {
          return await work();
        } finally {
          statements.push([label, performance.now() - t0]);
        }
      };
      // The hooks the app's own audit gets (renderer/engine/engine-backend.ts), timed like the statements.
      const { project, materialise } = projectionOf(engine, relation);
      const report = await runAudit((sql) => timed(sql, () => engine.query(sql)), {
        relation, input: { files: [], format }, engine: engine.kind, targets,
        ...(project ? { project: (columns: readonly string[]) => timed(`project ${columns.join(', ')}`, () => project(columns)) } : {}),
        ...(materialise ? { materialise: (select: string) => timed(`CREATE TEMP TABLE AS ${select}`, () => materialise(select)) } : {}),
      });
      const t = report.targets[0];
      return { verdict: report.verdict, rows: report.input.rows, ess: t?.ess ?? NaN, maxWeight: t?.max_weight ?? NaN, statements,
        checks: report.checks.map((c) => `${c.id} ${c.status}`), reasons: report.reasons.map((r) => JSON.stringify(r).slice(0, 200)), roles: JSON.stringify(report.roles).slice(0, 2000) };
    }),
    sourceScans: () => engine.sourceScans,
    lastParquetLoad: () => lastLoad,
  };
  status.textContent = 'ready';
} catch (error) {
  status.textContent = `failed: ${String(error)}`;
}
