/**
 * The ClickHouse engine adapter, over ClickHouse's HTTP interface with node:http (clickhouse-http.ts; the
 * npm client library targets current server releases, this one must also speak to Debian's 18.16, and
 * Node's fetch gives up on an answer head after 300 s, shorter than a long statement's first rows).
 * - No client-side wait is shorter than the statement's own limit: the socket may stay silent (no head yet,
 *   no next chunk) for as long as the statement may run.
 * - One POST per statement, answered as TabSeparatedWithNamesAndTypes and read as a stream, line by line,
 *   so the row cap and the byte cap stop a large answer while it arrives (clickhouse-tsv.ts).
 * - Every statement carries a query_id; cancel(), an abort signal or the timeout close the request and send
 *   `KILL QUERY WHERE query_id = ...`, since closing the socket alone does not stop a running aggregate.
 * - Reads only: each statement runs with readonly = 2 (no writes, settings allowed) unless the user's own
 *   profile is already read-only; the server also enforces the time and row limits.
 * - Credentials travel in an Authorization header, never in the URL; they appear in no message.
 */
import { randomUUID } from 'node:crypto';
import { Agent } from 'node:http';
import { ident, literal } from '../core/sql/quote-clickhouse.ts';
import type { Table } from '../core/table.ts';
import type { Credentials } from './clickhouse-address.ts';
import { networkError, serverError } from './clickhouse-errors.ts';
import { post, type HttpAnswer } from './clickhouse-http.ts';
import { MID_STREAM_ERROR, tsvReader } from './clickhouse-tsv.ts';
import { MAX_RESULT_ROWS } from './native.ts';
import { EngineError } from './types.ts';
import type { Engine, QueryOptions, RegisteredSource } from './types.ts';

export interface ClickHouseEngineOptions {
  /** "http://HOST:PORT" of the HTTP interface */
  readonly server: string;
  readonly credentials: Credentials;
  /** Longest one statement may run, client and server side (default 30 minutes). */
  readonly timeoutMs?: number;
  /** Longest the first answer (version check) may take (default 10 s). */
  readonly connectTimeoutMs?: number;
  readonly maxResultRows?: number;
  /** Bytes of one answer as sent (default 128 MB). */
  readonly maxReplyBytes?: number;
}

export interface ClickHouseColumn {
  readonly name: string;
  /** ClickHouse's type name, e.g. "Nullable(Float64)" */
  readonly type: string;
}

export interface RegisteredTable extends Omit<RegisteredSource, 'format'> {
  readonly format: 'clickhouse';
  readonly database: string;
  readonly table: string;
  readonly where: string | null;
  readonly columns: readonly ClickHouseColumn[];
}

export interface ClickHouseEngine extends Engine {
  readonly kind: 'clickhouse';
  readonly server: string;
  /** version() of the server answering, e.g. "18.16.1" */
  readonly version: string;
  /** [major, minor] of `version`, for choosing between a modern function and its fallback */
  readonly versionParts: readonly [number, number];
  /** A table (optionally filtered by a WHERE condition in ClickHouse SQL) as the log. */
  registerTable(database: string, table: string, where?: string): Promise<RegisteredTable>;
}

const DEFAULT_TIMEOUT_MS = 30 * 60 * 1000;
const DEFAULT_MAX_BYTES = 128 * 1024 * 1024;
const UTC_ZONES = new Set(['UTC', 'Etc/UTC', 'UCT', 'Etc/UCT', 'GMT', 'Etc/GMT', 'Universal', 'Etc/Universal', 'Zulu', 'Etc/Zulu']);

function basicAuth(c: Credentials): string {
  return `Basic ${Buffer.from(`${c.user}:${c.password}`, 'utf8').toString('base64')}`;
}

export async function connectClickHouse(options: ClickHouseEngineOptions): Promise<ClickHouseEngine> {
  const server = options.server.replace(/\/+$/, '');
  const user = options.credentials.user;
  const auth = basicAuth(options.credentials);
  const timeoutMs = options.timeoutMs ?? DEFAULT_TIMEOUT_MS;
  const maxRows = options.maxResultRows ?? MAX_RESULT_ROWS;
  const maxBytes = options.maxReplyBytes ?? DEFAULT_MAX_BYTES;
  const running = new Map<string, (why: 'cancelled' | 'timeout') => void>();
  const relations: string[] = [];
  let closed = false;
  let scans = 0;
  /** settings sent with every statement; empty when the user's profile is read-only (it may change none) */
  let settings: Record<string, string> = {};
  let utc = true;
  const agent = new Agent({ keepAlive: true });
  /** KILLs go on sockets of their own, so closing the engine (which ends the pool) does not drop them */
  const killAgent = new Agent({ keepAlive: false });

  async function kill(queryId: string): Promise<void> {
    try {
      const r = await post(`${server}/`, { agent: killAgent, headers: { Authorization: auth }, body: `KILL QUERY WHERE query_id = ${literal(queryId)} ASYNC`, signal: AbortSignal.timeout(5000), idleMs: 5000 });
      r.cancel();
    } catch {
      // the server is gone or busy: the closed request is all that can be done
    }
  }

  async function run(sql: string, opts: QueryOptions & { timeoutMs?: number; readsLog?: boolean } = {}): Promise<Table> {
    if (closed) throw new EngineError('closed', 'The ClickHouse connection is closed.');
    let queryId = `counterweight-${randomUUID()}`;
    const controller = new AbortController();
    const limit = opts.timeoutMs ?? timeoutMs;
    let stopped: 'cancelled' | 'timeout' | null = null;
    const stop = (why: 'cancelled' | 'timeout') => {
      if (stopped) return;
      stopped = why;
      controller.abort();
      void kill(queryId);
    };
    const key = queryId;
    running.set(key, stop);
    const timer = setTimeout(() => stop('timeout'), limit);
    const onAbort = () => stop('cancelled');
    if (opts.signal?.aborted) onAbort();
    opts.signal?.addEventListener('abort', onAbort, { once: true });
    const params = () => new URLSearchParams({ query_id: queryId, ...settings, ...(settings.readonly ? { max_execution_time: String(Math.ceil(limit / 1000)) } : {}) });
    const stoppedError = () => (stopped === 'timeout'
      ? new EngineError('timeout', `The query did not finish within ${Math.round(limit / 1000)} s on ClickHouse at ${server} and was stopped.`)
      : new EngineError('cancelled', 'The query was cancelled.'));
    try {
      let response: HttpAnswer | undefined;
      const send = () => post(`${server}/?${params()}`, {
        agent,
        headers: { Authorization: auth, 'Content-Type': 'text/plain; charset=utf-8' },
        body: `${sql.trim().replace(/;+$/, '')}\nFORMAT TabSeparatedWithNamesAndTypes`,
        signal: controller.signal,
        // the statement's own timer stops it first; the socket's silence limit is only a backstop past it
        idleMs: limit + 5000,
      });
      // a kept-alive socket the server has just closed fails before any answer: the statement is a read, so it is sent once more
      for (let attempt = 0; !response; attempt++) {
        try {
          response = await send();
        } catch (e) {
          if (stopped) throw stoppedError();
          const error = networkError(e, server);
          // the line dropped (or the socket was silent past the statement's limit): the statement may still
          // run on the server, so it is killed; a first failure is sent once more under a new id (a kept-alive socket
          // the server had just closed fails the same way, before the statement reached it)
          void kill(queryId);
          if (attempt > 0 || !/closed the connection/.test(error.message)) throw error;
          queryId = `counterweight-${randomUUID()}`;
        }
      }
      if (response.status < 200 || response.status > 299) {
        const text = await response.text().catch(() => '');
        throw plain(serverError(text || `HTTP ${response.status}`, { server, user }));
      }
      const reader = tsvReader();
      const decoder = new TextDecoder('utf-8');
      const answer = response;
      let pending = '';
      let bytes = 0;
      let failure: string | null = null;
      const tooLarge = (what: string) => {
        stop('cancelled');
        answer.cancel();
        return new EngineError('too-large', what);
      };
      try {
        for await (const value of answer.body) {
          bytes += value.byteLength;
          if (bytes > maxBytes) throw tooLarge(`The answer is larger than ${maxBytes >= 2 ** 20 ? `${(maxBytes / 2 ** 20).toFixed(0)} MB` : `${maxBytes.toLocaleString('en')} bytes`}, the most one answer may hold; the query was stopped.`);
          pending += decoder.decode(value, { stream: true });
          if (failure !== null) continue;
          let nl: number;
          while ((nl = pending.indexOf('\n')) >= 0) {
            const line = pending.slice(0, nl);
            if (MID_STREAM_ERROR.test(line)) { failure = pending; pending = ''; break; }
            pending = pending.slice(nl + 1);
            reader.line(line);
            if (reader.rows > maxRows) throw tooLarge(`The result has more than ${maxRows.toLocaleString('en')} rows, the most one answer may hold; the query was stopped.`);
          }
        }
      } catch (e) {
        if (e instanceof EngineError) throw e;
        if (stopped) throw stoppedError();
        void kill(queryId);
        throw networkError(e, server);
      }
      pending += decoder.decode();
      if (failure !== null || MID_STREAM_ERROR.test(pending)) throw plain(serverError((failure ?? '') + pending, { server, user }));
      if (pending.length > 0) reader.line(pending);
      const table = reader.table();
      if (!utc && reader.sourceTypes().some((t) => /^(Nullable\()?DateTime(64)?(\(\d+\))?\)?$/.test(t))) {
        throw new EngineError('unsupported-format', `ClickHouse at ${server} writes date-times in its own time zone, not UTC; convert the column in the query (toTimeZone(t, 'UTC')) or run the server on UTC.`);
      }
      if (opts.readsLog !== false && relations.some((r) => sql.includes(r))) scans++;
      return table;
    } finally {
      clearTimeout(timer);
      opts.signal?.removeEventListener('abort', onAbort);
      running.delete(key);
    }
  }

  /** the server's own row limit (maxRows + 1) speaks in its words; the answer says what the caller's cap is */
  function plain(e: EngineError): EngineError {
    return e.code === 'too-large' ? new EngineError('too-large', `The result has more than ${maxRows.toLocaleString('en')} rows, the most one answer may hold; the query was stopped.`) : e;
  }

  const first = await run(`SELECT version() AS version, timezone() AS zone, getSetting('readonly') AS readonly`, { timeoutMs: options.connectTimeoutMs ?? 10_000 }).catch(async (e: unknown) => {
    // getSetting() came after 18.16; the read-only state is then read from system.settings
    if (e instanceof EngineError && e.code === 'sql' && /getSetting/.test(e.message)) {
      return run(`SELECT version() AS version, timezone() AS zone, (SELECT value FROM system.settings WHERE name = 'readonly') AS readonly`, { timeoutMs: options.connectTimeoutMs ?? 10_000 });
    }
    throw e;
  });
  const version = String(first.columns[0]?.[0] ?? '');
  const zone = String(first.columns[1]?.[0] ?? '');
  const readonly = String(first.columns[2]?.[0] ?? '0');
  utc = UTC_ZONES.has(zone);
  if (readonly === '0') settings = { readonly: '2', max_result_rows: String(maxRows + 1), result_overflow_mode: 'throw' };
  const [major, minor] = version.split('.').map((x) => Number(x));
  const versionParts: readonly [number, number] = [Number.isFinite(major) ? major as number : 0, Number.isFinite(minor) ? minor as number : 0];

  const engine: ClickHouseEngine = {
    kind: 'clickhouse',
    server,
    version,
    versionParts,
    get sourceScans() { return scans; },
    async register() {
      throw new EngineError('unsupported-format', 'The ClickHouse engine reads tables on its server (clickhouse://HOST:PORT/DB.TABLE), not files.');
    },
    async registerTable(database, table, where) {
      const columns = await run(`SELECT name, type FROM system.columns WHERE database = ${literal(database)} AND table = ${literal(table)} ORDER BY position`).catch(async (e: unknown) => {
        // system.columns has no `position` before 19.x: the table order is kept without it
        if (e instanceof EngineError && e.code === 'sql') return run(`SELECT name, type FROM system.columns WHERE database = ${literal(database)} AND table = ${literal(table)}`);
        throw e;
      });
      if (columns.rowCount === 0) {
        const db = await run(`SELECT count() AS n FROM system.databases WHERE name = ${literal(database)}`);
        const known = Number(db.columns[0]?.[0] ?? 0) > 0;
        throw new EngineError('sql', known ? `There is no table ${database}.${table} on ClickHouse at ${server}.` : `There is no database ${database} on ClickHouse at ${server}.`);
      }
      const base = `${ident(database)}.${ident(table)}`;
      const filter = where?.trim() ? where.trim() : null;
      const relation = filter ? `(SELECT * FROM ${base} WHERE (${filter}))` : base;
      if (filter) {
        await run(`SELECT 1 FROM ${relation} LIMIT 0`, { readsLog: false }).catch((e: unknown) => {
          throw e instanceof EngineError && e.code === 'sql' ? new EngineError('sql', `The filter (--where) does not read on ${database}.${table}: ${e.message}`) : e;
        });
      }
      relations.push(relation);
      const names = columns.columns[0] ?? [];
      const types = columns.columns[1] ?? [];
      return {
        relation,
        format: 'clickhouse',
        files: [],
        scanSql: relation,
        database,
        table,
        where: filter,
        columns: names.map((n, i) => ({ name: String(n), type: String(types[i]) })),
      };
    },
    query: (sql, opts) => run(sql, opts),
    async cancel() {
      for (const stop of [...running.values()]) stop('cancelled');
    },
    async close() {
      closed = true;
      await engine.cancel();
      agent.destroy();
    },
  };
  return engine;
}
