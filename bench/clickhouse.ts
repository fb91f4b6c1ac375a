/**
 * The warehouse row of the benchmark: the audit of a table on two local ClickHouse shards
 * (test/engine/clickhouse-servers.ts, Debian's 18.16) against the table's bare count() and against the
 * native DuckDB audit of the same rows as one Parquet file, with the peak resident memory of our own
 * process (the rows stay in the servers; only the cube, tails and examples come back).
 * The rows are the demo log repeated K times (`--copies K`; the demo has 125,375 rows), split over the shards
 * by copy, made inside the servers from the demo as loaded once. Prints one JSON object.
 *
 *   node --import tsx bench/clickhouse.ts [--copies 16] [--no-duckdb]
 *
 * `statements` lists what each statement of the ClickHouse audit cost, from the first server's system.query_log
 * (the statements the audit sent, each with its seconds and rows read) and the shards' own (the slowest shard's
 * seconds for the part each shard ran); --no-duckdb leaves out the Parquet audit.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { createNativeEngine } from '../app/engine/native.ts';
import { loadShards } from '../test/engine/clickhouse-load.ts';
import { CLUSTER, startLocalShards } from '../test/engine/clickhouse-servers.ts';

const ROOT = path.resolve(path.dirname(new URL(import.meta.url).pathname), '..');
const DEMO = path.join(ROOT, 'sample-data', 'maple-row-demo.parquet');
const ROLES = ['--role', 'decision_id=decision_id', '--role', 'time=logged_at', '--role', 'action=promotion', '--role', 'propensity=propensity', '--role', 'reward=ordered', '--role', 'policy_version=policy_version', '--segments', 'region,device,tenure', '--quiet'];

/** Runs the command under /usr/bin/time -v: wall seconds and our process's peak RSS. */
function timed(args: readonly string[], env: NodeJS.ProcessEnv): Promise<{ seconds: number; peakRssMb: number; code: number | null; stderr: string; startedAt: number }> {
  return new Promise((resolve) => {
    const startedAt = Math.floor(Date.now() / 1000);
    const start = process.hrtime.bigint();
    const child = spawn('/usr/bin/time', ['-v', process.execPath, path.join(ROOT, 'bin/counterweight.mjs'), ...args], { cwd: ROOT, env, stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (b: Buffer) => { stderr += b.toString(); });
    child.once('exit', (code) => {
      const seconds = Number(process.hrtime.bigint() - start) / 1e9;
      const rss = /Maximum resident set size \(kbytes\): (\d+)/.exec(stderr);
      resolve({ startedAt, seconds, peakRssMb: rss ? Number(rss[1]) / 1024 : NaN, code, stderr: stderr.split('\n').filter((l) => l.startsWith('counterweight')).join('\n') });
    });
  });
}

interface StatementCost { seconds: number; readRows: number; memoryMb: number; shardSeconds: number[]; statement: string }

/**
 * The statements the audit sent since `since` (Unix seconds), from the first server's query log, each with the
 * seconds of the part each shard ran for it (matched by initial_query_id). 18.16 flushes the log every second.
 */
async function statementCosts(shards: Awaited<ReturnType<typeof startLocalShards>>, since: number): Promise<StatementCost[]> {
  await new Promise((r) => setTimeout(r, 2500));
  const rows = async (server: number, sql: string) => (await shards.admin(server, `${sql} FORMAT JSONEachRow`)).trim().split('\n').filter(Boolean).map((l) => JSON.parse(l) as Record<string, string | number>);
  const finished = `type = 2 AND event_time >= toDateTime(${since}) AND query NOT LIKE '%system.query_log%'`;
  const initial = await rows(0, `SELECT query_id, query_duration_ms, read_rows, memory_usage, substring(replaceRegexpAll(query, '\\\\s+', ' '), 1, 160) AS q FROM system.query_log WHERE ${finished} AND is_initial_query = 1 ORDER BY event_time, query_start_time`);
  const onShards = await Promise.all([0, 1].map((s) => rows(s, `SELECT initial_query_id, query_duration_ms FROM system.query_log WHERE ${finished} AND is_initial_query = 0`)));
  return initial.map((r) => ({
    seconds: Number(r.query_duration_ms) / 1000,
    readRows: Number(r.read_rows),
    memoryMb: Math.round(Number(r.memory_usage) / 2 ** 20),
    shardSeconds: onShards.map((list) => Math.max(0, ...list.filter((x) => x.initial_query_id === r.query_id).map((x) => Number(x.query_duration_ms) / 1000))),
    statement: String(r.q),
  }));
}

const { values } = parseArgs({ options: { copies: { type: 'string', default: '16' }, 'no-duckdb': { type: 'boolean' } } });
const copies = Number(values.copies);
const BATCH = 40;
const out = mkdtempSync(path.join(tmpdir(), 'cw-bench-clickhouse-'));
const shards = await startLocalShards(2);
try {
  const engine = await createNativeEngine();
  const log = await engine.query(`SELECT * FROM read_parquet('${DEMO}')`);
  await loadShards(shards, 'demo', log, (i) => i % 2);
  const parquet = path.join(out, 'rows.parquet');
  await engine.query(`COPY (SELECT d.* FROM read_parquet('${DEMO}') AS d, range(${copies}) AS r(k)) TO '${parquet}' (FORMAT parquet)`);
  await engine.close();
  for (const s of [0, 1]) {
    await shards.admin(s, 'CREATE TABLE big AS demo ENGINE = MergeTree() ORDER BY tuple()');
    // each shard holds its half of every copy: the same rows as the Parquet file, K times the demo. Up to 40
    // copies an INSERT (each demo row repeated by ARRAY JOIN), so 100M rows are 20 inserts a shard, not the 800
    // parts that would pass 18.16's limit of 300 active parts (parts_to_throw_insert) before merges catch up
    for (let k = 0; k < copies; k += BATCH) await shards.admin(s, `INSERT INTO big SELECT * FROM demo ARRAY JOIN range(toUInt64(${Math.min(BATCH, copies - k)})) AS cw_copy`);
  }
  await shards.admin(0, `CREATE TABLE big_all AS big ENGINE = Distributed(${CLUSTER}, default, big)`);
  const rows = Number((await shards.admin(0, 'SELECT count() FROM big_all FORMAT TSV')).trim());
  const url = shards.servers[0]!.url;
  const started = Date.now();
  await shards.admin(0, 'SELECT count() FROM big_all FORMAT TSV');
  const countSeconds = (Date.now() - started) / 1000;
  // count() alone is answered from part metadata; a read of the role columns is the scan floor
  const floorStart = Date.now();
  await shards.admin(0, 'SELECT count(), sum(propensity), uniqExact(promotion), max(logged_at), sum(ordered) FROM big_all FORMAT TSV');
  const floorSeconds = (Date.now() - floorStart) / 1000;
  const env = { ...process.env, CLICKHOUSE_USER: 'default', CLICKHOUSE_PASSWORD: '' };
  const clickhouse = await timed(['audit', `clickhouse://127.0.0.1:${shards.servers[0]!.httpPort}/default.big_all`, ...ROLES, '--json', path.join(out, 'ch.json')], env);
  const statements = await statementCosts(shards, clickhouse.startedAt);
  const duckdb = values['no-duckdb'] ? null : await timed(['audit', parquet, ...ROLES, '--json', path.join(out, 'duck.json')], env);
  const load = (await import('node:os')).loadavg();
  // the verdict and every check's status of the two reports. They need not all agree: checks that read the log's
  // first 100,000 rows (schema.roles' counts) see the servers' first rows, which are not the file's first rows
  // (test/engine/clickhouse-audit.test.ts holds the reports equal in full on the same demo with the same order)
  const outline = (file: string): [string, string][] | null => { try { const r = JSON.parse(readFileSync(path.join(out, file), 'utf8')) as { verdict: string; checks: { id: string; status: string }[] }; return [['verdict', r.verdict], ...r.checks.map((c) => [c.id, c.status] as [string, string])]; } catch { return null; } };
  const a = outline('ch.json');
  const b = outline('duck.json');
  const sameVerdictAndStatuses = a !== null && b !== null && JSON.stringify(a) === JSON.stringify(b);
  const sameVerdict = a !== null && b !== null && a[0]?.[1] === b[0]?.[1];
  // where they differ: [check, ClickHouse status, DuckDB status]
  const statusDifferences = a && b ? a.flatMap(([id, s], i) => (b[i]?.[0] === id && b[i]?.[1] === s ? [] : [[id, s, b[i]?.[1] ?? null]])) : 'a report is missing';
  console.log(JSON.stringify({ rows, server: url, clickhouseAudit: clickhouse, bareCountSeconds: countSeconds, roleColumnsScanSeconds: floorSeconds, statements, duckdbParquetAudit: duckdb, sameVerdict, sameVerdictAndStatuses, statusDifferences, loadAverage: load.map((x) => Number(x.toFixed(1))) }, null, 2));
} finally {
  await shards.stop();
  rmSync(out, { recursive: true, force: true });
}
