/**
 * Local ClickHouse servers for tests: each a `clickhouse-server` process of its own (never the system
 * service), with its config and data in a temporary folder, listening on 127.0.0.1 only, on free
 * loopback ports (HTTP, native, interserver). Two of them form the cluster `cw_two_shards`, so a
 * Distributed table or remote() over both spans two shards. Every statement is logged in system.query_log,
 * so a test can see what ran on each shard. Stopped by PID in afterAll and on exit.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { connectClickHouse, type ClickHouseEngine, type ClickHouseEngineOptions } from '../../app/engine/clickhouse.ts';

export const CLUSTER = 'cw_two_shards';
/** A second user with a password, for the wrong-credentials test. */
export const AUDITOR = { user: 'auditor', password: 'maple-row-secret' } as const;

export interface LocalServer {
  readonly httpPort: number;
  readonly tcpPort: number;
  readonly url: string;
  readonly dir: string;
  readonly pid: number;
}

export interface LocalShards {
  readonly servers: readonly LocalServer[];
  /** SQL run as the default user (no password) on one server: the harness's own loader, not the adapter. */
  admin(server: number, sql: string, body?: string | Uint8Array): Promise<string>;
  /** The adapter on the first server, as the default user unless `options` says otherwise; closed by stop(). */
  connect(options?: Omit<Partial<ClickHouseEngineOptions>, 'server'>): Promise<ClickHouseEngine>;
  stop(): Promise<void>;
}

const BINARY_CANDIDATES = ['/usr/sbin/clickhouse-server', '/usr/bin/clickhouse-server', '/usr/bin/clickhouse'];

/** The server binary, or null with the reason (the tests skip, or fail under CI, with that reason). */
export function clickhouseBinary(): { path: string; args: string[] } | { path: null; reason: string } {
  for (const p of BINARY_CANDIDATES) {
    if (!existsSync(p)) continue;
    return p.endsWith('/clickhouse') ? { path: p, args: ['server', '--'] } : { path: p, args: [] };
  }
  const which = spawnSync('sh', ['-c', 'command -v clickhouse-server'], { encoding: 'utf8' });
  const found = which.stdout.trim();
  if (which.status === 0 && found) return { path: found, args: [] };
  return { path: null, reason: 'clickhouse-server is not installed (apt-get install -y clickhouse-server clickhouse-client; .ci/run does it)' };
}

/** Under CI a missing server is a failure, not a skip: the distributed tests must run there. */
export function clickhouseRequired(): boolean {
  return process.env.CI === 'true' || process.env.CW_REQUIRE_CLICKHOUSE === '1';
}

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.unref();
    s.on('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const address = s.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      s.close(() => resolve(port));
    });
  });
}

function configXml(dir: string, ports: { http: number; tcp: number; inter: number }, shardTcpPorts: readonly number[]): string {
  const shards = shardTcpPorts.map((p) => `<shard><replica><host>127.0.0.1</host><port>${p}</port></replica></shard>`).join('');
  return `<?xml version="1.0"?>
<yandex>
  <logger><level>warning</level><log>${dir}/server.log</log><errorlog>${dir}/server.err.log</errorlog><size>10M</size><count>1</count></logger>
  <http_port>${ports.http}</http_port>
  <tcp_port>${ports.tcp}</tcp_port>
  <interserver_http_port>${ports.inter}</interserver_http_port>
  <interserver_http_host>127.0.0.1</interserver_http_host>
  <listen_host>127.0.0.1</listen_host>
  <max_connections>64</max_connections>
  <keep_alive_timeout>3</keep_alive_timeout>
  <max_concurrent_queries>32</max_concurrent_queries>
  <uncompressed_cache_size>67108864</uncompressed_cache_size>
  <mark_cache_size>67108864</mark_cache_size>
  <path>${dir}/data/</path>
  <tmp_path>${dir}/tmp/</tmp_path>
  <user_files_path>${dir}/user_files/</user_files_path>
  <format_schema_path>${dir}/format_schemas/</format_schema_path>
  <users_config>${dir}/users.xml</users_config>
  <default_profile>default</default_profile>
  <default_database>default</default_database>
  <timezone>UTC</timezone>
  <mlock_executable>false</mlock_executable>
  <remote_servers><${CLUSTER}>${shards}</${CLUSTER}></remote_servers>
  <builtin_dictionaries_reload_interval>3600</builtin_dictionaries_reload_interval>
  <query_log><database>system</database><table>query_log</table><flush_interval_milliseconds>1000</flush_interval_milliseconds></query_log>
  <max_session_timeout>3600</max_session_timeout>
  <default_session_timeout>60</default_session_timeout>
</yandex>
`;
}

const USERS_XML = `<?xml version="1.0"?>
<yandex>
  <profiles><default><max_memory_usage>4000000000</max_memory_usage><max_threads>2</max_threads><log_queries>1</log_queries><load_balancing>random</load_balancing></default></profiles>
  <users>
    <default><password></password><networks><ip>127.0.0.1</ip></networks><profile>default</profile><quota>default</quota></default>
    <${AUDITOR.user}><password>${AUDITOR.password}</password><networks><ip>127.0.0.1</ip></networks><profile>default</profile><quota>default</quota></${AUDITOR.user}>
  </users>
  <quotas><default><interval><duration>3600</duration><queries>0</queries><errors>0</errors><result_rows>0</result_rows><read_rows>0</read_rows><execution_time>0</execution_time></interval></default></quotas>
</yandex>
`;

const running = new Set<ChildProcess>();
let exitHookInstalled = false;
function killAllOnExit(): void {
  if (exitHookInstalled) return;
  exitHookInstalled = true;
  process.on('exit', () => {
    for (const child of running) if (child.pid) try { process.kill(child.pid, 'SIGKILL'); } catch { /* already gone */ }
  });
}

async function ping(url: string): Promise<boolean> {
  try {
    const r = await fetch(`${url}/ping`, { signal: AbortSignal.timeout(2000) });
    return r.ok && (await r.text()).trim() === 'Ok.';
  } catch {
    return false;
  }
}

function logTail(dir: string): string {
  const file = path.join(dir, 'server.err.log');
  if (!existsSync(file)) return '(no server error log)';
  return readFileSync(file, 'utf8').split('\n').slice(-15).join('\n');
}

/**
 * Starts `count` servers that know each other as the shards of CLUSTER. Startup is bounded by
 * `timeoutMs`; past it every started process is killed and the promise rejects with the log tail.
 */
export async function startLocalShards(count = 2, timeoutMs = 90_000): Promise<LocalShards> {
  const binary = clickhouseBinary();
  if (binary.path === null) throw new Error(binary.reason);
  killAllOnExit();
  const ports: { http: number; tcp: number; inter: number }[] = [];
  const taken = new Set<number>();
  const next = async () => {
    for (;;) {
      const p = await freePort();
      if (!taken.has(p)) { taken.add(p); return p; }
    }
  };
  for (let i = 0; i < count; i++) ports.push({ http: await next(), tcp: await next(), inter: await next() });
  const children: { child: ChildProcess; server: LocalServer; exited: { code: number | null } | null }[] = [];
  const stop = async () => {
    await Promise.all(children.map(async (c) => {
      if (c.exited || !c.child.pid) return;
      const gone = new Promise<void>((resolve) => c.child.once('exit', () => resolve()));
      try { process.kill(c.child.pid, 'SIGTERM'); } catch { /* already gone */ }
      const timer = setTimeout(() => { try { if (c.child.pid) process.kill(c.child.pid, 'SIGKILL'); } catch { /* gone */ } }, 10_000);
      await gone;
      clearTimeout(timer);
    }));
    for (const c of children) {
      running.delete(c.child);
      rmSync(c.server.dir, { recursive: true, force: true });
    }
  };
  try {
    for (let i = 0; i < count; i++) {
      const dir = mkdtempSync(path.join(tmpdir(), `cw-clickhouse-${i}-`));
      writeFileSync(path.join(dir, 'config.xml'), configXml(dir, ports[i]!, ports.map((p) => p.tcp)));
      writeFileSync(path.join(dir, 'users.xml'), USERS_XML);
      const child = spawn(binary.path, [...binary.args, `--config-file=${path.join(dir, 'config.xml')}`], { cwd: dir, stdio: ['ignore', 'ignore', 'pipe'] });
      const entry = { child, server: { httpPort: ports[i]!.http, tcpPort: ports[i]!.tcp, url: `http://127.0.0.1:${ports[i]!.http}`, dir, pid: child.pid ?? -1 }, exited: null as { code: number | null } | null };
      child.stderr?.resume();
      child.once('exit', (code) => { entry.exited = { code }; running.delete(child); });
      running.add(child);
      children.push(entry);
    }
    const deadline = Date.now() + timeoutMs;
    for (const c of children) {
      for (;;) {
        if (c.exited) throw new Error(`clickhouse-server on port ${c.server.httpPort} exited during start-up (code ${c.exited.code}):\n${logTail(c.server.dir)}`);
        if (await ping(c.server.url)) break;
        if (Date.now() > deadline) throw new Error(`clickhouse-server on port ${c.server.httpPort} did not answer /ping within ${timeoutMs / 1000} s:\n${logTail(c.server.dir)}`);
        await new Promise((r) => setTimeout(r, 250));
      }
    }
  } catch (error) {
    await stop();
    throw error;
  }
  const servers = children.map((c) => c.server);
  const engines: ClickHouseEngine[] = [];
  return {
    servers,
    async stop() {
      for (const e of engines.splice(0)) await e.close();
      await stop();
    },
    async connect(options = {}) {
      const engine = await connectClickHouse({ server: servers[0]!.url, credentials: { user: 'default', password: '' }, ...options });
      engines.push(engine);
      return engine;
    },
    async admin(server, sql, body) {
      const s = servers[server];
      if (!s) throw new Error(`no server ${server}`);
      const url = body === undefined ? `${s.url}/` : `${s.url}/?query=${encodeURIComponent(sql)}`;
      const send = () => fetch(url, { method: 'POST', body: (body ?? sql) as BodyInit, signal: AbortSignal.timeout(120_000) });
      // a kept-alive socket the server closed (keep_alive_timeout above) fails before any answer: sent once more
      const r = await send().catch((e: unknown) => {
        if ((e as { cause?: { code?: string } }).cause?.code === 'UND_ERR_SOCKET') return send();
        throw e;
      });
      const text = await r.text();
      if (!r.ok) throw new Error(`ClickHouse ${s.httpPort}: ${text.trim()}\n(statement: ${sql.slice(0, 200)})`);
      return text;
    },
  };
}
