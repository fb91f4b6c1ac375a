/**
 * Time of the audit's pure part (everything after the SQL results arrive), in milliseconds:
 *   node --import tsx bench/pure.ts <log path> [--runs N] [--cold N] [--report out.json] [--save results.bin]
 * Every query of one audit on the native engine is answered once and kept by its SQL text; the audit
 * is then re-run against that cache, so only the checks and the report are timed:
 *   - cold: each run in a fresh Node process that loads the cached results (what one real audit pays,
 *     JIT warm-up included), `--cold` runs (default 5);
 *   - warm: `--runs` runs in this process after those (default 9).
 * Process CPU time is printed beside wall time: it is far less sensitive to other load on the machine.
 * `--report` writes the report of the first warm run (fixed clock) for before/after comparison; `--save` keeps the
 * cached results, so that one cold run can be profiled: node --cpu-prof --import tsx bench/pure.ts --child results.bin
 * (`--child results.bin --report out.json` writes that run's report, fixed clock, to compare before and after a change).
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { deserialize, serialize } from 'node:v8';
import { runAuditDetailed, type AuditRequest } from '../app/core/audit.ts';
import type { Table } from '../app/core/table.ts';

const V9 = new URL('../sample-data/maple-row-v9-policy.csv', import.meta.url).pathname;
const args = process.argv.slice(2);
const option = (name: string): string | undefined => {
  const i = args.indexOf(name);
  return i >= 0 ? args[i + 1] : undefined;
};
const fixedNow = () => Date.parse('2026-06-01T00:00:00Z');

interface Saved {
  readonly request: Omit<AuditRequest, 'now'>;
  readonly results: [string, Table][];
}

function answering(results: ReadonlyMap<string, Table>) {
  return async (sql: string): Promise<Table> => {
    const t = results.get(sql);
    if (!t) throw new Error(`query not in the cache: ${sql.slice(0, 80)}`);
    return t;
  };
}

async function timed(run: (sql: string) => Promise<Table>, request: AuditRequest) {
  const s = performance.now();
  const c = process.cpuUsage();
  const { report } = await runAuditDetailed(run, request);
  const used = process.cpuUsage(c);
  return { report, wall: performance.now() - s, cpu: (used.user + used.system) / 1000 };
}

const summary = (xs: readonly number[]) => {
  const sorted = [...xs].sort((a, b) => a - b);
  return `median ${(sorted[Math.floor(sorted.length / 2)] ?? NaN).toFixed(1)} ms (min ${sorted[0]?.toFixed(1)}, max ${sorted[sorted.length - 1]?.toFixed(1)})`;
};

const child = option('--child');
if (child) {
  const saved = deserialize(readFileSync(child)) as Saved;
  const t = await timed(answering(new Map(saved.results)), { ...saved.request, now: fixedNow });
  const out = option('--report');
  if (out) writeFileSync(out, `${JSON.stringify(t.report, null, 2)}\n`);
  process.stdout.write(JSON.stringify({ wall: t.wall, cpu: t.cpu }));
} else {
  const path = args[0];
  if (!path || path.startsWith('--')) throw new Error('usage: bench/pure.ts <log path> [--runs N] [--cold N] [--report out.json]');
  const runs = Number(option('--runs') ?? 9);
  const coldRuns = Number(option('--cold') ?? 5);
  const reportPath = option('--report');
  const { createNativeEngine } = await import('../app/engine/native.ts');
  const engine = await createNativeEngine();
  const src = await engine.register({ kind: 'path', paths: [path] });
  const base = {
    relation: src.relation,
    input: { files: [], format: src.format },
    scanSql: src.scanSql,
    engine: 'native',
    targets: [{ spec: `table:${V9}`, tableText: readFileSync(V9, 'utf8') }],
  };
  const request: AuditRequest = { ...base, now: fixedNow };
  const results = new Map<string, Table>();
  const t0 = performance.now();
  await runAuditDetailed(async (sql) => {
    const t = await engine.query(sql);
    results.set(sql, t);
    return t;
  }, request);
  console.log(`scans: ${((performance.now() - t0) / 1000).toFixed(2)} s, ${results.size} queries`);
  await engine.close();

  const dir = mkdtempSync(join(tmpdir(), 'cw-pure-'));
  try {
    const file = join(dir, 'results.bin');
    writeFileSync(file, serialize({ request: base, results: [...results] } satisfies Saved));
    const keep = option('--save');
    if (keep) writeFileSync(keep, readFileSync(file));
    const cold = Array.from({ length: coldRuns }, () => JSON.parse(execFileSync(process.execPath, [...process.execArgv, new URL(import.meta.url).pathname, '--child', file], { encoding: 'utf8' })) as { wall: number; cpu: number });
    if (coldRuns > 0) console.log(`pure part, cold (${coldRuns} fresh processes): wall ${summary(cold.map((c) => c.wall))}; CPU ${summary(cold.map((c) => c.cpu))}`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  const warm: { wall: number; cpu: number }[] = [];
  for (let i = 0; i < runs; i++) {
    const t = await timed(answering(results), request);
    warm.push(t);
    if (i === 0 && reportPath) writeFileSync(reportPath, `${JSON.stringify(t.report, null, 2)}\n`);
  }
  if (runs > 0) console.log(`pure part, warm (${runs} runs in one process): wall ${summary(warm.map((c) => c.wall))}; CPU ${summary(warm.map((c) => c.cpu))}`);
}
