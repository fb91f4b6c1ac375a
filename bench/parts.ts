/**
 * What adding one day costs in an audit merged from parts (README, "Audits merged from parts"): a demo-style
 * log of --rows decisions over 30 days is split into one Parquet file per day, days 1–29 are read into a parts
 * folder once, and then, each in its own process under /usr/bin/time (median of --runs, CPU = user + sys):
 *   - add day 30 and audit the 30 days merged      audit --parts COPY --add-part day30.parquet
 *   - audit the 30 days merged, adding nothing     audit --parts COPY
 *   - audit day 30 alone (one day's scan)          audit day30.parquet
 *   - audit the whole log                          audit whole.parquet
 * Every run starts from a fresh copy of the 29-day folder (with its merged state, state-29-mN for format N). Results go to
 * bench/parts-results.json, with the part counts at which the merged cube's entries were formed again from every
 * part (the scales moved) while the 30 days were added.
 *
 *   node --import tsx bench/parts.ts [--rows 3000000] [--runs 3]
 */
import { execFile } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs, promisify } from 'node:util';
import { DuckDBInstance } from '@duckdb/node-api';
import { MERGED_FORMAT, mergedHeader } from '../app/cli/merged-state.ts';

const BENCH = dirname(fileURLToPath(import.meta.url));
const ROOT = resolve(BENCH, '..');
const run = promisify(execFile);
const { values } = parseArgs({ options: { rows: { type: 'string' }, runs: { type: 'string' } } });
const rows = Number(values.rows ?? 3_000_000);
const runs = Number(values.runs ?? 3);
const dir = join(BENCH, 'cache', `parts-${rows}`);
const whole = join(dir, 'maple-row-demo.parquet');
const ROLES = ['--role', 'decision_id=decision_id', '--role', 'time=logged_at', '--role', 'action=promotion', '--role', 'propensity=propensity', '--role', 'reward=ordered', '--role', 'policy_version=policy_version', '--segments', 'region,device,tenure', '--target', `table:${join(ROOT, 'sample-data', 'maple-row-v9-policy.csv')}`];

async function timed(args: readonly string[]): Promise<{ wall: number; cpu: number; rssMb: number }> {
  const { stderr } = await run('/usr/bin/time', ['-f', 'CW_TIME %e %U %S %M', process.execPath, join(ROOT, 'bin', 'counterweight.mjs'), ...args], { cwd: ROOT, maxBuffer: 1 << 26 }).catch((e: { stderr?: string; code?: number }) => {
    // exit 1 and 2 are verdicts, not failures
    if (e.code === 1 || e.code === 2) return { stderr: e.stderr ?? '' };
    throw e;
  });
  const m = /CW_TIME (\S+) (\S+) (\S+) (\S+)/.exec(stderr);
  if (!m) throw new Error(`no timing in: ${stderr.slice(-400)}`);
  return { wall: Number(m[1]), cpu: Number(m[2]) + Number(m[3]), rssMb: Number(m[4]) / 1024 };
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)] as number;

async function main(): Promise<void> {
  mkdirSync(dir, { recursive: true });
  if (!existsSync(whole)) await run(process.execPath, ['--import', 'tsx', join(ROOT, 'sample-data', 'generate.ts'), '--rows', String(rows), '--out', dir, '--formats', 'parquet', '--demo-only'], { cwd: ROOT });
  const days = join(dir, 'days');
  if (!existsSync(days)) {
    mkdirSync(days);
    const db = await DuckDBInstance.create(':memory:');
    const c = await db.connect();
    const list = (await c.runAndReadAll(`SELECT DISTINCT strftime(logged_at, '%Y-%m-%d') FROM read_parquet('${whole}') ORDER BY 1`)).getRows().map((r) => String(r[0]));
    for (const d of list) await c.run(`COPY (SELECT * FROM read_parquet('${whole}') WHERE strftime(logged_at, '%Y-%m-%d') = '${d}') TO '${join(days, `day-${d}.parquet`)}' (FORMAT parquet)`);
    c.closeSync();
    db.closeSync();
  }
  const files = readdirSync(days).filter((f) => f.endsWith('.parquet')).sort().map((f) => join(days, f));
  const last = files[files.length - 1] as string;
  // one 29-day folder per merged state format (state-29 holds the JSON one of format 1)
  const base = join(dir, `state-29-m${MERGED_FORMAT}`);
  // a folder without a merged state of this format is read again: adding day 30 would form it from every part
  if (!existsSync(join(base, 'parts.json')) || !(JSON.parse(readFileSync(join(base, 'parts.json'), 'utf8')) as { merged?: string }).merged?.endsWith('.bin')) {
    rmSync(base, { recursive: true, force: true });
    await timed(['audit', '--parts', base, ...ROLES, ...files.slice(0, -1).flatMap((f) => ['--add-part', f]), '--quiet']);
  }
  const cases: [string, (copy: string) => string[]][] = [
    ['add day 30, audit 30 days merged', (copy) => ['audit', '--parts', copy, '--add-part', last, '--quiet']],
    ['audit 29 days merged, adding nothing', (copy) => ['audit', '--parts', copy, '--quiet']],
    ['audit day 30 alone', () => ['audit', last, ...ROLES, '--quiet']],
    ['audit the whole log', () => ['audit', whole, ...ROLES, '--quiet']],
  ];
  const results = [];
  let rebuiltAt: number[] = [];
  for (const [name, args] of cases) {
    const samples = [];
    for (let i = 0; i < runs; i++) {
      const copy = join(dir, 'state-run');
      rmSync(copy, { recursive: true, force: true });
      cpSync(base, copy, { recursive: true });
      samples.push(await timed(args(copy)));
      if (i === 0 && existsSync(join(copy, 'parts.json'))) {
        const merged = (JSON.parse(readFileSync(join(copy, 'parts.json'), 'utf8')) as { merged?: string }).merged;
        if (merged && name.startsWith('add')) rebuiltAt = [...mergedHeader(readFileSync(join(copy, merged)), merged).rebuilt_at];
      }
    }
    const row = { case: name, wall_s: median(samples.map((s) => s.wall)), cpu_s: median(samples.map((s) => s.cpu)), peak_rss_mb: Math.round(median(samples.map((s) => s.rssMb))), runs: samples };
    results.push(row);
    process.stdout.write(`${name.padEnd(40)} wall ${row.wall_s.toFixed(2)} s  cpu ${row.cpu_s.toFixed(2)} s  rss ${row.peak_rss_mb} MB\n`);
  }
  const [add, , day] = results;
  const ratio = add && day ? add.cpu_s / day.cpu_s : NaN;
  process.stdout.write(`adding one day costs ${ratio.toFixed(2)}× the CPU of auditing that day alone\n`);
  writeFileSync(join(BENCH, 'parts-results.json'), `${JSON.stringify({ schema: 'counterweight.bench-parts/1', generated_at: new Date().toISOString(), rows, days: files.length, runs, load_average_at_start: loadavg().map((x) => x.toFixed(2)).join(' '), results, add_over_day_cpu: ratio, cube_entries_formed_again_at_parts: rebuiltAt }, null, 2)}\n`);
}

await main();
