/**
 * What the ClickHouse audit tests share: the CLI they spawn, the demo log's roles, and the demo log split row by row
 * over two local servers (test/engine/clickhouse-servers.ts) behind a Distributed table.
 */
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { loadShards } from './clickhouse-load.ts';
import { CLUSTER, startLocalShards, type LocalShards } from './clickhouse-servers.ts';

export const ROOT = path.resolve('.');
export const BIN = path.join(ROOT, 'bin/counterweight.mjs');
export const DEMO = 'sample-data/maple-row-demo.parquet';
export const ROLES = ['--role', 'decision_id=decision_id', '--role', 'time=logged_at', '--role', 'action=promotion', '--role', 'propensity=propensity', '--role', 'reward=ordered', '--role', 'policy_version=policy_version', '--segments', 'region,device,tenure'];

export const env = { ...process.env, NO_COLOR: '1', CLICKHOUSE_USER: 'default', CLICKHOUSE_PASSWORD: '' };

/** `counterweight ARGS` run to its end, as the ClickHouse user `default` without a password. */
export function cli(args: readonly string[]): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd: ROOT, encoding: 'utf8', env, timeout: 600_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/**
 * Two local servers holding the demo log as table `demo`, rows alternating between them, and `demo_all`, the Distributed
 * table over both; `withLog` sees the log's engine while it is open (to read what a test needs from the same file).
 */
export async function demoOnTwoShards(withLog?: (engine: Engine) => Promise<void>): Promise<{ shards: LocalShards; address: string; sizes: number[] }> {
  const shards = await startLocalShards(2);
  const engine = await createNativeEngine();
  let sizes: number[];
  try {
    const log = await engine.query(`SELECT * FROM read_parquet('${path.resolve(DEMO)}')`);
    sizes = await loadShards(shards, 'demo', log, (i) => i % 2);
    await withLog?.(engine);
  } finally {
    await engine.close();
  }
  await shards.admin(0, `CREATE TABLE demo_all AS demo ENGINE = Distributed(${CLUSTER}, default, demo)`);
  return { shards, address: `clickhouse://127.0.0.1:${shards.servers[0]!.httpPort}/default.demo_all`, sizes };
}
