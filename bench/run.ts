/**
 * The Counterweight benchmark: generates (once, cached in bench/cache/) Maple Row Market logs of 1M,
 * 10M and 100M decisions, then measures, each in its own child process under /usr/bin/time -v:
 * the physical floor (a bare scan of the role columns), the cube query alone and the full audit,
 * on every engine, plus a hand-written Arrow baseline. Median of --runs timed runs after a warm-up.
 *
 *   npm run bench -- [--sizes 1m,10m,30m,100m] [--engines native,host,wasm,browser,baseline,clickhouse] [--runs N]
 *                    [--clickhouse-size 1m|10m|30m|100m]
 *                    [--kinds floor,cube,audit] [--formats parquet,csv,arrow] [--smoke] [--out FILE] [--memory-limit 2GB]
 * (--memory-limit: DuckDB's memory_limit for the native engine instead of its default (app/engine/memory.ts); it
 * spills to bench/cache/spill; use with --out to keep those results apart. --no-determinism: skip the extra
 * 1-thread audit whose body digest fills the determinism column.) After the rows, a summary per size, engine and
 * format: floor, cube, audit, audit/cube, peak RSS, and whether the body digest was the same on 1 and 2 threads.
 * The warehouse row (engine `clickhouse`, bench/clickhouse.ts): the audit of a table on two local ClickHouse
 * shards of --clickhouse-size rows (default 10m; 1m with --smoke) against its bare count(), a scan of the role
 * columns and the native DuckDB audit of the same rows as Parquet, with our process's peak RSS; skipped with the
 * reason when clickhouse-server is not installed.
 */
import { execFile, spawn } from 'node:child_process';
import { mkdir, readFile, rename, rm, writeFile } from 'node:fs/promises';
import { cpus, totalmem } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs, promisify } from 'node:util';
import { exists, writeArrowCopy } from './arrow-cache.ts';
import type { EngineName, Kind, MeasureResult, MeasureSpec } from './measure.ts';

const BENCH = dirname(fileURLToPath(import.meta.url));
const ROOT = resolve(BENCH, '..');
const CACHE = join(BENCH, 'cache');
const POLICY = join(ROOT, 'sample-data', 'maple-row-v9-policy.csv');
const SIZES: Record<string, number> = { '1m': 1_000_000, '10m': 10_000_000, '30m': 30_000_000, '100m': 100_000_000 };
/** CSV, Wasm and the Arrow baseline stop at 10M rows: a 100M-row CSV is ~8 GB, and Wasm has a 4 GB heap. */
const CSV_MAX = 10_000_000;
const ENGINES: readonly EngineName[] = ['native', 'host', 'wasm', 'browser', 'baseline'];

export interface Row {
  size: string;
  rows: number;
  engine: EngineName;
  format: 'parquet' | 'csv' | 'arrow';
  kind: Kind;
  runs: number[];
  seconds: number;
  /** median process CPU seconds of the timed runs (DuckDB's threads included; absent for the host and the browser) */
  cpuSeconds?: number;
  /** the 1-minute load average when the measurement started (the machine is shared) */
  loadAverage?: number;
  rowsPerSecond: number;
  /** /usr/bin/time -v "Maximum resident set size" of the measuring process (the host's own shown apart) */
  peakRssMb: number;
  hostPeakRssMb?: number;
  peakHeapMb: number;
  browserPeakHeapMb?: number;
  answer: Record<string, number | string>;
  error?: string;
  skipped?: string;
}

export interface Options {
  sizes: string[];
  engines: EngineName[];
  runs: number;
  warmup: boolean;
  smoke: boolean;
  out: string;
  memoryLimit?: string;
  /** audit natively once more on 1 thread and compare the body digest (the determinism column) */
  determinism: boolean;
  /** measure only these of floor, cube, audit */
  kinds?: Kind[];
  /** measure only logs in these formats (parquet, csv, arrow) */
  formats?: Row['format'][];
  log: (line: string) => void;
  /** the warehouse row's size (null: not measured) */
  clickhouse: string | null;
}

export function parseOptions(argv: readonly string[]): Options {
  const { values } = parseArgs({
    args: [...argv],
    options: { sizes: { type: 'string' }, engines: { type: 'string' }, runs: { type: 'string' }, smoke: { type: 'boolean' }, out: { type: 'string' }, 'no-warmup': { type: 'boolean' }, 'memory-limit': { type: 'string' }, 'no-determinism': { type: 'boolean' }, kinds: { type: 'string' }, formats: { type: 'string' }, 'clickhouse-size': { type: 'string' } },
    strict: true,
  });
  const smoke = values.smoke ?? false;
  const sizes = (values.sizes ?? (smoke ? '1m' : '1m,10m,100m')).split(',').map((s) => s.trim().toLowerCase());
  for (const s of sizes) if (!(s in SIZES)) throw new Error(`--sizes takes ${Object.keys(SIZES).join(', ')}, got "${s}"`);
  const named = (values.engines ?? (smoke ? 'native,host,wasm,baseline' : [...ENGINES, 'clickhouse'].join(','))).split(',').map((e) => e.trim());
  for (const e of named) if (!(ENGINES as readonly string[]).includes(e) && e !== 'clickhouse') throw new Error(`--engines takes ${ENGINES.join(', ')}, clickhouse, got "${e}"`);
  const engines = named.filter((e) => e !== 'clickhouse') as EngineName[];
  const clickhouseSize = (values['clickhouse-size'] ?? (smoke ? '1m' : '10m')).trim().toLowerCase();
  if (!(clickhouseSize in SIZES)) throw new Error(`--clickhouse-size takes ${Object.keys(SIZES).join(', ')}, got "${clickhouseSize}"`);
  const clickhouse = named.includes('clickhouse') || values['clickhouse-size'] !== undefined ? clickhouseSize : null;
  const runs = Number(values.runs ?? (smoke ? 1 : 3));
  if (!Number.isInteger(runs) || runs < 1) throw new Error(`--runs must be a whole number of at least 1, got "${values.runs}"`);
  const kinds = values.kinds?.split(',').map((k) => k.trim()) as Kind[] | undefined;
  for (const k of kinds ?? []) if (!['floor', 'cube', 'audit'].includes(k)) throw new Error(`--kinds takes floor, cube, audit, got "${k}"`);
  const formats = values.formats?.split(',').map((f) => f.trim()) as Row['format'][] | undefined;
  for (const f of formats ?? []) if (!['parquet', 'csv', 'arrow'].includes(f)) throw new Error(`--formats takes parquet, csv, arrow, got "${f}"`);
  const memoryLimit = values['memory-limit'];
  if (memoryLimit !== undefined && !/^\d+(\.\d+)?\s*(KB|MB|GB|TB|KiB|MiB|GiB|TiB)$/i.test(memoryLimit)) throw new Error(`--memory-limit takes a size such as 2GB, got "${memoryLimit}"`);
  return { sizes, engines, clickhouse, runs, warmup: !smoke && !values['no-warmup'], smoke, determinism: !values['no-determinism'], ...(memoryLimit ? { memoryLimit } : {}), ...(kinds ? { kinds } : {}), ...(formats ? { formats } : {}), out: values.out ?? join(smoke ? CACHE : BENCH, smoke ? 'results-smoke.json' : 'results.json'), log: (line) => process.stdout.write(`${line}\n`) };
}

const dirOf = (size: string) => join(CACHE, `rows-${size}`);
export const logPath = (size: string, ext: 'parquet' | 'csv' | 'arrow') => join(dirOf(size), `maple-row-demo.${ext}`);

async function freeGb(path: string): Promise<number> {
  const { stdout } = await promisify(execFile)('df', ['-Pk', path]);
  const fields = stdout.trim().split('\n').pop()!.split(/\s+/);
  return Number(fields[3]) / 2 ** 20;
}

/** The generator writes the CSV first and converts it; a 100M-row log needs ~8 GB of room meanwhile. */
async function ensureLog(size: string, formats: ('parquet' | 'csv')[], log: Options['log']): Promise<void> {
  const missing: ('parquet' | 'csv')[] = [];
  for (const f of formats) if (!(await exists(logPath(size, f)))) missing.push(f);
  if (missing.length === 0) return;
  const rows = SIZES[size]!;
  const need = (rows * 85) / 1e9 + 1;
  await mkdir(CACHE, { recursive: true });
  const free = await freeGb(CACHE);
  if (free < need) throw new Error(`generating ${size} rows needs about ${need.toFixed(0)} GB free under ${CACHE}; ${free.toFixed(1)} GB are`);
  log(`generating the ${size}-row log (${missing.join(', ')}) in ${dirOf(size)} ...`);
  const t0 = performance.now();
  await runChild(['--import', 'tsx', join(ROOT, 'sample-data', 'generate.ts'), '--rows', String(rows), '--out', dirOf(size), '--formats', missing.join(','), '--demo-only'], false);
  log(`  generated in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
}

async function ensureArrow(size: string, log: Options['log']): Promise<void> {
  if (await exists(logPath(size, 'arrow'))) return;
  await ensureLog(size, ['parquet'], log);
  log(`writing the Arrow IPC copy of the ${size}-row log for the baseline ...`);
  const t0 = performance.now();
  await writeArrowCopy(logPath(size, 'parquet'), logPath(size, 'arrow'));
  log(`  written in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
}

function runChild(args: string[], timedRss: boolean): Promise<{ stdout: string; stderr: string; code: number | null }> {
  return new Promise((done, fail) => {
    const command = timedRss ? '/usr/bin/time' : process.execPath;
    const child = spawn(command, timedRss ? ['-v', process.execPath, ...args] : args, { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d: Buffer) => { stdout += d.toString(); });
    child.stderr.on('data', (d: Buffer) => { stderr += d.toString(); });
    child.once('error', fail);
    child.once('close', (code) => {
      if (!timedRss && code !== 0) fail(new Error(`${args.join(' ')} failed (${code}): ${stderr.trim().slice(-2000)}`));
      else done({ stdout, stderr, code });
    });
  });
}

const median = (xs: readonly number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
};

async function measureInChild(spec: MeasureSpec): Promise<MeasureResult & { timeRssMb: number }> {
  const { stdout, stderr } = await runChild(['--import', 'tsx', join(BENCH, 'measure.ts'), JSON.stringify(spec)], true);
  const line = stdout.split('\n').find((l) => l.startsWith('@@'));
  if (!line) throw new Error(`the measurement printed no result: ${stderr.trim().slice(-1500)}`);
  if (line.startsWith('@@error ')) throw new Error(JSON.parse(line.slice(8)) as string);
  const kb = /Maximum resident set size \(kbytes\): (\d+)/.exec(stderr)?.[1];
  return { ...(JSON.parse(line.slice(9)) as MeasureResult), timeRssMb: kb ? Number(kb) / 1024 : NaN };
}

interface Plan { size: string; engine: EngineName; format: Row['format']; kind: Kind }

export function plan(options: Pick<Options, 'sizes' | 'engines' | 'smoke' | 'kinds' | 'formats'>): Plan[] {
  const out: Plan[] = [];
  const kinds: Kind[] = ['floor', 'cube', 'audit'];
  // The smoke run proves the harness on every engine in well under a minute: the full audit everywhere,
  // the floor and the cube on native Parquet only.
  const others: Kind[] = options.smoke ? ['audit'] : kinds;
  for (const size of options.sizes) {
    const small = SIZES[size]! <= CSV_MAX;
    for (const engine of options.engines) {
      if (engine === 'native') {
        for (const kind of kinds) out.push({ size, engine, format: 'parquet', kind });
        if (small) for (const kind of others) out.push({ size, engine, format: 'csv', kind });
      }
      // The host takes named requests only (no SQL), so its audit is measured and not its floor or cube query.
      if (engine === 'host') out.push({ size, engine, format: 'parquet', kind: 'audit' });
      if (engine === 'wasm' && small) for (const kind of others) out.push({ size, engine, format: 'csv', kind });
      // Parquet on DuckDB-Wasm: the audit, with the load of the log into DuckDB-Wasm's memory counted in it.
      if (engine === 'wasm' && small) out.push({ size, engine, format: 'parquet', kind: 'audit' });
      if (engine === 'browser' && size === '10m') out.push({ size, engine, format: 'csv', kind: 'audit' }, { size, engine, format: 'parquet', kind: 'audit' });
      if (engine === 'baseline' && small) out.push({ size, engine, format: 'arrow', kind: 'audit' });
    }
  }
  const kept = options.kinds ? out.filter((p) => options.kinds!.includes(p.kind)) : out;
  return options.formats ? kept.filter((p) => options.formats!.includes(p.format)) : kept;
}

async function loadAverageNow(): Promise<number | undefined> {
  const first = (await readFile('/proc/loadavg', 'utf8').catch(() => '')).split(' ')[0];
  return first ? Number(first) : undefined;
}

async function machine(): Promise<Record<string, string | number>> {
  const cpuinfo = await readFile('/proc/cpuinfo', 'utf8').catch(() => '');
  return {
    nproc: cpus().length,
    memory_gb: Math.round((totalmem() / 2 ** 30) * 10) / 10,
    cpu_model: /model name\s*:\s*(.+)/.exec(cpuinfo)?.[1]?.trim() ?? cpus()[0]?.model ?? 'unknown',
    node: process.version,
    load_average_at_start: (await readFile('/proc/loadavg', 'utf8').catch(() => '')).split(' ').slice(0, 3).join(' '),
  };
}

const key = (r: Pick<Row, 'size' | 'engine' | 'format' | 'kind'>) => `${r.size}/${r.engine}/${r.format}/${r.kind}`;

export function ratios(rows: readonly Row[]): Record<string, number> {
  const find = (size: string, engine: string, format: string, kind: string) => rows.find((r) => r.size === size && r.engine === engine && r.format === format && r.kind === kind && !r.error && !r.skipped);
  const out: Record<string, number> = {};
  for (const a of rows.filter((r) => r.kind === 'audit' && !r.error && !r.skipped)) {
    const cube = find(a.size, a.engine, a.format, 'cube');
    const floor = find(a.size, a.engine, a.format, 'floor');
    if (cube) out[`${key(a)} audit/cube`] = a.seconds / cube.seconds;
    if (floor) out[`${key(a)} audit/floor`] = a.seconds / floor.seconds;
    const native = find(a.size, 'native', a.format, 'audit');
    if (a.engine !== 'native' && native) out[`${key(a)} ${a.engine}/native`] = a.seconds / native.seconds;
  }
  return out;
}

/** Least-squares line through (rows, seconds) of the native Parquet audit: seconds per million rows. */
export function slope(rows: readonly Row[]): { secondsPerMillionRows: number; interceptSeconds: number; points: number } | null {
  const pts = rows.filter((r) => r.engine === 'native' && r.format === 'parquet' && r.kind === 'audit' && !r.error && !r.skipped).map((r) => [r.rows / 1e6, r.seconds] as const);
  if (pts.length < 2) return null;
  const mx = pts.reduce((s, p) => s + p[0], 0) / pts.length;
  const my = pts.reduce((s, p) => s + p[1], 0) / pts.length;
  const sxy = pts.reduce((s, p) => s + (p[0] - mx) * (p[1] - my), 0);
  const sxx = pts.reduce((s, p) => s + (p[0] - mx) ** 2, 0);
  const b = sxy / sxx;
  return { secondsPerMillionRows: b, interceptSeconds: my - b * mx, points: pts.length };
}

function table(rows: readonly Row[], extra: Record<string, number>): string {
  const head = ['rows', 'engine', 'format', 'measure', 'median s', 'rows/s', 'peak RSS MB', 'host RSS MB', 'heap MB', 'runs', 'note'];
  const lines = rows.map((r) => {
    const ratio = r.kind === 'audit' ? [extra[`${key(r)} audit/cube`], extra[`${key(r)} audit/floor`]].map((x) => (x === undefined ? '-' : x.toFixed(1))).join(' / ') : '';
    return [r.size, r.engine, r.format, r.kind, r.error || r.skipped ? '-' : r.seconds.toFixed(3), r.error || r.skipped ? '-' : `${(r.rowsPerSecond / 1e6).toFixed(1)}M`,
      Number.isFinite(r.peakRssMb) ? r.peakRssMb.toFixed(0) : '-', r.hostPeakRssMb?.toFixed(0) ?? '', (r.browserPeakHeapMb ?? r.peakHeapMb).toFixed(0), r.runs.map((s) => s.toFixed(2)).join(' '),
      r.error ? `error: ${r.error.slice(0, 80)}` : r.skipped ? `skipped: ${r.skipped}` : r.kind === 'audit' ? `audit/cube / audit/floor ${ratio}` : ''];
  });
  const widths = head.map((h, j) => Math.max(h.length, ...lines.map((l) => String(l[j]).length)));
  const fmt = (l: readonly string[]) => l.map((c, j) => (j >= 4 && j <= 9 ? c.padStart(widths[j]!) : c.padEnd(widths[j]!))).join('  ');
  return [fmt(head), widths.map((w) => '-'.repeat(w)).join('  '), ...lines.map(fmt)].join('\n');
}

/** One line per size, engine and format: floor, cube, audit (median s), audit/cube, peak RSS of the audit, determinism. */
export function summary(rows: readonly Row[]): string {
  const ok = (r: Row | undefined) => (r && !r.error && !r.skipped ? r : undefined);
  const groups = new Map<string, Row[]>();
  for (const r of rows) groups.set(`${r.size}/${r.engine}/${r.format}`, [...(groups.get(`${r.size}/${r.engine}/${r.format}`) ?? []), r]);
  const head = ['rows', 'engine', 'format', 'floor s', 'cube s', 'audit s', 'audit CPU s', 'audit/cube', 'audit peak RSS MB', 'same body on 1 and 2 threads', 'load at audit'];
  const lines = [...groups.values()].map((g) => {
    const [floor, cube, audit] = (['floor', 'cube', 'audit'] as const).map((k) => ok(g.find((r) => r.kind === k)));
    const rss = audit ? Math.max(audit.peakRssMb, audit.hostPeakRssMb ?? 0) : NaN;
    const det = audit?.answer.deterministic;
    return [g[0]!.size, g[0]!.engine, g[0]!.format, floor?.seconds.toFixed(2) ?? '-', cube?.seconds.toFixed(2) ?? '-', audit?.seconds.toFixed(2) ?? '-', audit?.cpuSeconds?.toFixed(1) ?? '-',
      audit && cube ? (audit.seconds / cube.seconds).toFixed(1) : '-', Number.isFinite(rss) ? rss.toFixed(0) : '-', typeof det === 'string' ? det : '-', audit?.loadAverage?.toFixed(1) ?? '-'];
  });
  const widths = head.map((h, j) => Math.max(h.length, ...lines.map((l) => String(l[j]).length)));
  const fmt = (l: readonly string[]) => l.map((c, j) => (j >= 3 ? c.padStart(widths[j]!) : c.padEnd(widths[j]!))).join('  ');
  return [fmt(head), widths.map((w) => '-'.repeat(w)).join('  '), ...lines.map(fmt)].join('\n');
}

/** The demo log has this many rows; the warehouse row's table is the demo repeated to the size asked for. */
const DEMO_ROWS = 125_375;

/** bench/clickhouse.ts in a child process: one JSON object, or the reason it could not run. */
async function warehouseRow(size: string, log: Options['log']): Promise<Record<string, unknown>> {
  const { clickhouseBinary } = await import('../test/engine/clickhouse-servers.ts');
  const binary = clickhouseBinary();
  if (binary.path === null) {
    log(`${size}/clickhouse: skipped (${binary.reason})`);
    return { size, skipped: binary.reason };
  }
  const copies = Math.max(1, Math.round(SIZES[size]! / DEMO_ROWS));
  log(`${size}/clickhouse: the demo ${copies} times on two local shards, audited there and as Parquet natively ...`);
  const t0 = performance.now();
  try {
    const { stdout } = await runChild(['--import', 'tsx', join(BENCH, 'clickhouse.ts'), '--copies', String(copies)], false);
    const row = { size, copies, ...(JSON.parse(stdout.slice(stdout.indexOf('{'))) as Record<string, unknown>), wallSeconds: (performance.now() - t0) / 1000 };
    log(warehouseLine(row));
    return row;
  } catch (error) {
    log(`${size}/clickhouse: error ${(error as Error).message}`);
    return { size, error: (error as Error).message };
  }
}

function warehouseLine(w: Record<string, unknown>): string {
  if (w.skipped || w.error) return `warehouse ${String(w.size)}: ${w.skipped ? `skipped (${String(w.skipped)})` : `error ${String(w.error)}`}`;
  const ch = w.clickhouseAudit as { seconds: number; peakRssMb: number };
  const duck = w.duckdbParquetAudit as { seconds: number; peakRssMb: number };
  return `warehouse ${String(w.rows)} rows on two ClickHouse shards: audit ${ch.seconds.toFixed(1)} s at ${ch.peakRssMb.toFixed(0)} MB peak RSS of ours; bare count() ${Number(w.bareCountSeconds).toFixed(3)} s, role-column scan ${Number(w.roleColumnsScanSeconds).toFixed(2)} s; native DuckDB audit of the same rows as Parquet ${duck.seconds.toFixed(1)} s at ${duck.peakRssMb.toFixed(0)} MB; same verdict: ${String(w.sameVerdict)}, same statuses: ${String(w.sameVerdictAndStatuses)}${w.sameVerdictAndStatuses ? '' : ` (${JSON.stringify(w.statusDifferences)})`}; load ${(w.loadAverage as number[]).join(' ')}`;
}

export async function bench(options: Options): Promise<{ rows: Row[]; ratios: Record<string, number>; file: string }> {
  const { log } = options;
  const steps = plan(options);
  const previous: Row[] = options.smoke ? [] : await readFile(options.out, 'utf8').then((t) => (JSON.parse(t) as { results: Row[] }).results, () => []);
  const fresh: Row[] = [];
  let warehouse: Record<string, unknown> | null = options.smoke ? null : await readFile(options.out, 'utf8').then((t) => (JSON.parse(t) as { warehouse?: Record<string, unknown> }).warehouse ?? null, () => null);
  const mergeAll = (): Row[] => {
    const merged = [...previous.filter((p) => !fresh.some((f) => key(f) === key(p))), ...fresh];
    const order = (r: Row) => [SIZES[r.size]!, ENGINES.indexOf(r.engine), r.format, ['floor', 'cube', 'audit'].indexOf(r.kind)] as const;
    return merged.sort((a, b) => {
      const x = order(a), y = order(b);
      return x[0] - y[0] || x[1] - y[1] || x[2].localeCompare(y[2]) || x[3] - y[3];
    });
  };
  const save = async (merged: Row[]) => {
    const output = { schema: 'counterweight.bench/1', generated_at: new Date().toISOString(), machine: await machine(), options: { runs: options.runs, warmup: options.warmup, smoke: options.smoke, memory_limit: options.memoryLimit ?? null }, results: merged, ratios: ratios(merged), linear_fit: slope(merged), ...(warehouse ? { warehouse } : {}) };
    await mkdir(dirname(options.out), { recursive: true });
    await writeFile(`${options.out}.partial`, `${JSON.stringify(output, null, 2)}\n`);
    await rename(`${options.out}.partial`, options.out);
  };
  for (const step of steps) {
    const rows = SIZES[step.size]!;
    const base: Omit<Row, 'runs' | 'seconds' | 'rowsPerSecond' | 'peakRssMb' | 'peakHeapMb' | 'answer'> = { size: step.size, rows, engine: step.engine, format: step.format, kind: step.kind };
    let row: Row;
    try {
      if (step.format === 'arrow') await ensureArrow(step.size, log);
      else await ensureLog(step.size, [step.format], log);
      if (step.engine === 'browser') {
        const { browserUnavailable } = await import('./browser.ts');
        const why = await browserUnavailable();
        if (why) {
          row = { ...base, runs: [], seconds: NaN, rowsPerSecond: NaN, peakRssMb: NaN, peakHeapMb: NaN, answer: {}, skipped: why };
          log(`${key(step)}: skipped (${why})`);
          fresh.push(row);
          continue;
        }
      }
      const spec: MeasureSpec = { engine: step.engine, kind: step.kind, file: logPath(step.size, step.format), policy: POLICY, runs: options.runs, warmup: options.warmup, determinism: options.determinism, ...(options.memoryLimit && step.engine === 'native' ? { memoryLimit: options.memoryLimit } : {}) };
      const loadAverage = await loadAverageNow();
      const m = await measureInChild(spec);
      const seconds = median(m.seconds);
      row = { ...base, runs: m.seconds, seconds, ...(m.cpuSeconds?.length ? { cpuSeconds: median(m.cpuSeconds) } : {}), ...(loadAverage !== undefined ? { loadAverage } : {}), rowsPerSecond: rows / seconds, peakRssMb: m.timeRssMb, peakHeapMb: m.peakHeapMb, answer: m.answer,
        ...(m.hostPeakRssMb !== undefined ? { hostPeakRssMb: m.hostPeakRssMb } : {}), ...(m.browserPeakHeapMb !== undefined ? { browserPeakHeapMb: m.browserPeakHeapMb } : {}) };
      log(`${key(step)}: ${seconds.toFixed(3)} s${row.cpuSeconds !== undefined ? `, ${row.cpuSeconds.toFixed(2)} CPU s` : ''}${loadAverage !== undefined ? `, load ${loadAverage.toFixed(1)}` : ''} (runs ${m.seconds.map((s) => s.toFixed(3)).join(', ')}), peak RSS ${m.timeRssMb.toFixed(0)} MB${m.hostPeakRssMb ? `, host ${m.hostPeakRssMb.toFixed(0)} MB` : ''} ${JSON.stringify(m.answer)}`);
    } catch (error) {
      row = { ...base, runs: [], seconds: NaN, rowsPerSecond: NaN, peakRssMb: NaN, peakHeapMb: NaN, answer: {}, error: (error as Error).message };
      log(`${key(step)}: error ${(error as Error).message}`);
    }
    fresh.push(row);
    // written after every measurement, so an interrupted run keeps what it measured
    await save(mergeAll());
  }
  if (options.clickhouse) {
    warehouse = await warehouseRow(options.clickhouse, log);
    await save(mergeAll());
  }
  const merged = mergeAll();
  const extra = ratios(merged);
  const fit = slope(merged);
  log(`\n${table(merged, extra)}\n`);
  log(`${summary(merged)}\n`);
  for (const [k, v] of Object.entries(extra)) if (/wasm|host|browser|baseline/.test(k) && !/audit\/(cube|floor)/.test(k)) log(`${k}: ${v.toFixed(2)}`);
  if (fit) log(`native Parquet audit: ${fit.secondsPerMillionRows.toFixed(3)} s per million rows + ${fit.interceptSeconds.toFixed(2)} s (least squares over ${fit.points} sizes)`);
  if (warehouse) log(warehouseLine(warehouse));
  await save(merged);
  log(`wrote ${options.out}`);
  return { rows: merged, ratios: extra, file: options.out };
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  let options: Options;
  try {
    options = parseOptions(process.argv.slice(2));
  } catch (error) {
    process.stderr.write(`bench: ${(error as Error).message}\n`);
    process.exit(2);
  }
  bench(options).catch(async (error: unknown) => {
    process.stderr.write(`bench: ${error instanceof Error ? error.message : String(error)}\n`);
    await rm(`${options.out}.partial`, { force: true });
    process.exitCode = 1;
  });
}
