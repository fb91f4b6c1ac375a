/**
 * One measurement in its own process, so its peak RSS is its own (the parent runs this under
 * /usr/bin/time -v). Prints one line "@@result <json>" with the wall time of each timed run.
 *
 *   node --import tsx bench/measure.ts '<json MeasureSpec>'
 */
import { readFileSync } from 'node:fs';
import { readdir, readFile } from 'node:fs/promises';
import { runAudit } from '../app/core/audit.ts';
import type { Report } from '../app/core/model/report.ts';
import { resolveRoles } from '../app/core/roles/roles.ts';
import { cubeSql, groupsByPropensity, groupsByReward, rewardShift } from '../app/core/scan/cube.ts';
import { chooseBuckets, rowExpressions, timeRangeUs } from '../app/core/scan/expressions.ts';
import { profileLog } from '../app/core/scan/profile.ts';
import { resolveSettings } from '../app/core/settings.ts';
import type { RunQuery } from '../app/core/table.ts';
import type { HostEngine } from '../app/engine/host/client.ts';
import { spawnHostChild } from '../app/engine/host/spawn.ts';
import { cubeFromArrowIpc } from '../app/engine/cube-arrow.ts';
import { createNativeEngine } from '../app/engine/native.ts';
import { peakRssMb } from '../app/engine/memory.ts';
import { bodyDigest } from '../app/cli/reaudit.ts';
import { projectionOf } from '../app/engine/audit-hooks.ts';
import type { Engine } from '../app/engine/types.ts';
import { createWasmNodeEngine } from '../app/engine/wasm-node.ts';
import { baselineAudit } from './baseline.ts';

export type EngineName = 'native' | 'host' | 'wasm' | 'browser' | 'baseline';
export type Kind = 'floor' | 'cube' | 'audit';

export interface MeasureSpec {
  engine: EngineName;
  kind: Kind;
  /** the log: Parquet or CSV (or the Arrow IPC copy for the baseline) */
  file: string;
  policy: string;
  runs: number;
  warmup: boolean;
  /** DuckDB memory_limit for the native engine (it spills to bench/cache/spill beyond it); its default otherwise (app/engine/memory.ts) */
  memoryLimit?: string;
  /** native audits: also audit once on 1 thread and say whether the report body's digest is the same (default true) */
  determinism?: boolean;
}

export interface MeasureResult {
  seconds: number[];
  /** process CPU seconds (user + system, DuckDB's threads included) of each timed run; absent for the host and the browser, whose work runs in another process */
  cpuSeconds?: number[];
  /** a few numbers of the answer, to see that engines agree */
  answer: Record<string, number | string>;
  /** sampled in this process (and in the engine host's process, read from /proc) */
  peakRssMb: number;
  peakHeapMb: number;
  hostPeakRssMb?: number;
  browserPeakHeapMb?: number;
}

export const FLOOR_SQL = (relation: string) => `SELECT sum(propensity), sum(ordered), count(*) FROM ${relation}`;

async function childPids(): Promise<number[]> {
  const tasks = await readdir(`/proc/${process.pid}/task`);
  const pids: number[] = [];
  for (const t of tasks) {
    const text = await readFile(`/proc/${process.pid}/task/${t}/children`, 'utf8').catch(() => '');
    pids.push(...text.trim().split(/\s+/).filter(Boolean).map(Number));
  }
  return pids;
}

/** VmHWM: the process's peak resident set, from the kernel. */
async function peakRssOf(pid: number): Promise<number> {
  const status = await readFile(`/proc/${pid}/status`, 'utf8').catch(() => '');
  const kb = /VmHWM:\s+(\d+)/.exec(status)?.[1];
  return kb ? Number(kb) / 1024 : 0;
}

function auditAnswer(report: Report): Record<string, number | string> {
  const t = report.targets[0];
  return { verdict: report.verdict, rows: report.input.rows, ess: t?.ess ?? NaN, max_weight: t?.max_weight ?? NaN, scans: report.run.source_scans, body: bodyDigest(report).slice(0, 16), ...(report.run.peak_rss_mb !== undefined ? { report_peak_rss_mb: report.run.peak_rss_mb } : {}) };
}

/**
 * The cube statement the audit builds for this log (no target column, default settings), from one
 * profile scan, so the cube's peak memory is measured without the rest of an audit.
 */
export async function auditCubeSql(run: RunQuery, relation: string): Promise<string> {
  const profile = await profileLog(run, relation);
  const roles = resolveRoles(profile);
  const settings = resolveSettings();
  const buckets = chooseBuckets(timeRangeUs(roles, profile), settings['time.bucket'], settings['time.max_buckets']);
  const p = profile.columns.find((c) => c.name === roles.propensity);
  const r = profile.columns.find((c) => c.name === roles.reward);
  // the reward's shift and the row count set the exact sums' scales, as in the audit (without them the sums are plain doubles)
  return cubeSql({ relation, rows: rowExpressions(roles, profile, buckets), capped: [], cap: settings['segments.cap'], floor: settings['support.floor.epsilon'], byPropensity: groupsByPropensity(p), byReward: groupsByReward(r), reward: rewardShift(r), rowCount: profile.rows });
}

const SPILL = new URL('./cache/spill/', import.meta.url).pathname;

async function openEngine(name: EngineName, memoryLimit?: string, threads?: number): Promise<Engine> {
  switch (name) {
    case 'native': return createNativeEngine({ tempDirectory: SPILL, ...(memoryLimit ? { memoryLimit } : {}), ...(threads ? { threads } : {}) });
    case 'wasm': return createWasmNodeEngine();
    default: throw new Error(`no in-process engine ${name}`);
  }
}

/** Runs `once` (after an untimed warm-up when asked) and returns the timed runs' wall seconds and this process's CPU seconds. */
async function timed<T>(spec: MeasureSpec, once: () => Promise<T>): Promise<{ seconds: number[]; cpuSeconds: number[]; last: T }> {
  let last = spec.warmup ? await once() : undefined;
  const seconds: number[] = [];
  const cpuSeconds: number[] = [];
  for (let i = 0; i < spec.runs; i++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    last = await once();
    seconds.push((performance.now() - t0) / 1000);
    const c = process.cpuUsage(c0);
    cpuSeconds.push((c.user + c.system) / 1e6);
  }
  return { seconds, cpuSeconds, last: last as T };
}

export async function measure(spec: MeasureSpec): Promise<MeasureResult> {
  let peakHeap = 0;
  const sampler = setInterval(() => { peakHeap = Math.max(peakHeap, process.memoryUsage().heapUsed); }, 50);
  const policyText = readFileSync(spec.policy, 'utf8');
  const targets = [{ spec: `table:${spec.policy}`, tableText: policyText }];
  try {
    if (spec.engine === 'baseline') {
      const { seconds, cpuSeconds, last } = await timed(spec, () => baselineAudit(spec.file, policyText));
      return { seconds, cpuSeconds, answer: { rows: last.rows, ess: last.ess, max_weight: last.maxWeight, cells: last.cells, duplicate_ids: last.duplicateIds }, peakRssMb: await peakRssOf(process.pid), peakHeapMb: peakHeap / 2 ** 20 };
    }
    if (spec.engine === 'browser') {
      const { measureInBrowser } = await import('./browser.ts');
      return await measureInBrowser(spec, targets);
    }
    if (spec.engine === 'host') return await measureHost(spec, targets);
    const engine = await openEngine(spec.engine, spec.memoryLimit);
    try {
      const opening = performance.now();
      const openCpu = process.cpuUsage();
      const source = await engine.register({ kind: 'path', paths: [spec.file] });
      // DuckDB-Wasm loads a Parquet log into its memory when it is opened (app/engine/parquet/): that load is
      // part of every audit of the file, so it is added to each timed run (measured once; opening twice would load twice).
      const loadsOnOpen = spec.engine === 'wasm' && source.format === 'parquet';
      const openSeconds = loadsOnOpen ? (performance.now() - opening) / 1000 : 0;
      const openCpuUsage = process.cpuUsage(openCpu);
      const openCpuSeconds = loadsOnOpen ? (openCpuUsage.user + openCpuUsage.system) / 1e6 : 0;
      const run: RunQuery = (sql) => engine.query(sql);
      // a CSV is parsed once for the row-level statements, as the command and the app audit it (Engine.project)
      // and the cube, tails and clip rows read one table of the log's row groups (Engine.materialise)
      const request = { relation: source.relation, input: { files: [], format: source.format }, engine: engine.kind, targets, peakRssMb, ...projectionOf(engine, source.relation) };
      const audit = () => runAudit(run, request);
      let result: { seconds: number[]; cpuSeconds: number[]; answer: Record<string, number | string> };
      if (spec.kind === 'audit') {
        const { seconds, cpuSeconds, last } = await timed(spec, audit);
        const answer: Record<string, number | string> = { ...auditAnswer(last), ...(openSeconds ? { open_seconds: +openSeconds.toFixed(2) } : {}) };
        // the peak of the timed audits, read before the 1-thread audit below adds a second engine's memory to this process
        const peakRssMb = await peakRssOf(process.pid);
        if (spec.engine === 'native' && spec.determinism !== false) answer.deterministic = (await oneThreadDigest(spec, targets)) === answer.body ? 'yes' : 'no';
        return { seconds: seconds.map((s) => s + openSeconds), cpuSeconds: cpuSeconds.map((s) => s + openCpuSeconds), answer, peakRssMb, peakHeapMb: peakHeap / 2 ** 20 };
      } else if (spec.kind === 'cube') {
        const cubeSql = await auditCubeSql(run, source.relation);
        const { seconds, cpuSeconds, last } = await timed(spec, () => engine.query(cubeSql));
        result = { seconds, cpuSeconds, answer: { cells: last.rowCount } };
      } else {
        const { seconds, cpuSeconds, last } = await timed(spec, () => engine.query(FLOOR_SQL(source.relation)));
        result = { seconds, cpuSeconds, answer: { rows: Number(last.columns[2]?.[0] ?? NaN) } };
      }
      return { ...result, peakRssMb: await peakRssOf(process.pid), peakHeapMb: peakHeap / 2 ** 20 };
    } finally {
      await engine.close();
    }
  } finally {
    clearInterval(sampler);
  }
}

/** The body digest of one audit of the log on a native engine with 1 DuckDB thread (the timed runs use every core). */
async function oneThreadDigest(spec: MeasureSpec, targets: { spec: string; tableText: string }[]): Promise<string> {
  const engine = await openEngine('native', spec.memoryLimit, 1);
  try {
    const source = await engine.register({ kind: 'path', paths: [spec.file] });
    const report = await runAudit((sql) => engine.query(sql), { relation: source.relation, input: { files: [], format: source.format }, engine: engine.kind, targets, ...projectionOf(engine, source.relation) });
    return bodyDigest(report).slice(0, 16);
  } finally {
    await engine.close();
  }
}

/**
 * Through the engine host, the desktop data path: one audit message, the report and the cube (Arrow IPC)
 * back, the cube decoded as the renderer decodes it before loading it into its own DuckDB-Wasm. The host
 * takes named requests only, so only the full audit is measured through it.
 */
async function measureHost(spec: MeasureSpec, targets: { spec: string; tableText: string }[]): Promise<MeasureResult> {
  if (spec.kind !== 'audit') throw new Error('the engine host runs named requests only (no SQL): measure its audit');
  const host: HostEngine = spawnHostChild();
  try {
    await host.connect();
    const { source } = await host.register({ kind: 'path', paths: [spec.file] });
    const { seconds, last } = await timed(spec, async () => { const r = await host.audit({ source: source.relation, targets }); cubeFromArrowIpc(r.cubeIpc); return r.report; });
    const hosts = await Promise.all((await childPids()).map(peakRssOf));
    return { seconds, answer: auditAnswer(last), peakRssMb: await peakRssOf(process.pid), peakHeapMb: 0, ...(hosts.length ? { hostPeakRssMb: Math.max(...hosts) } : {}) };
  } finally {
    await host.close();
  }
}

if (process.argv[2]) {
  measure(JSON.parse(process.argv[2]) as MeasureSpec).then(
    (result) => { process.stdout.write(`@@result ${JSON.stringify(result)}\n`); },
    (error: unknown) => {
      process.stdout.write(`@@error ${JSON.stringify(error instanceof Error ? error.message : String(error))}\n`);
      process.exitCode = 1;
    },
  );
}
