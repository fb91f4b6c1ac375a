/**
 * The ClickHouse adapter's waits (app/engine/clickhouse-http.ts) against a loopback HTTP server that speaks
 * just enough of ClickHouse's HTTP interface (TabSeparatedWithNamesAndTypes: names line, types line, rows;
 * ClickHouse documentation, "HTTP Interface" and "Formats"): a statement whose answer head, or whose next
 * body chunk, comes later than a short wait still succeeds when its own limit is longer, and one past its
 * limit is stopped and killed. No ClickHouse server is needed. Node's fetch waits at most 300 s for a head
 * (undici's headersTimeout default, from undici's documentation); here that fixed wait is scaled down to 1 s
 * by a fetch wrapper, so an adapter that still went through fetch would fail these tests.
 */
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connectClickHouse } from '../../app/engine/clickhouse.ts';
import { EngineError } from '../../app/engine/types.ts';

const HEAD_WAIT_MS = 1000; // the scaled-down stand-in for fetch's fixed 300 s
const LATE_MS = 1800; // later than HEAD_WAIT_MS

interface Seen { sql: string; queryId: string | null }

function body(req: IncomingMessage): Promise<string> {
  return new Promise((resolve) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c)).on('end', () => resolve(Buffer.concat(chunks).toString('utf8')));
  });
}

describe('ClickHouse transport waits as long as the statement may run', () => {
  let server: Server;
  let url: string;
  const seen: Seen[] = [];
  const realFetch = globalThis.fetch;

  beforeAll(async () => {
    server = createServer((req: IncomingMessage, res: ServerResponse) => {
      void body(req).then((sql) => {
        const queryId = new URL(req.url ?? '/', 'http://x').searchParams.get('query_id');
        seen.push({ sql, queryId });
        if (sql.includes('version()')) {
          res.end('version\tzone\treadonly\nString\tString\tString\n18.16.1\tUTC\t1\n');
        } else if (sql.startsWith('KILL QUERY')) {
          res.end('');
        } else if (sql.includes('late_head')) {
          // as ClickHouse does for an aggregate: no head until the first rows
          const t = setTimeout(() => res.end('late_head\nUInt8\n7\n'), LATE_MS);
          res.on('close', () => clearTimeout(t));
        } else if (sql.includes('late_chunk')) {
          res.writeHead(200, { 'Content-Type': 'text/tab-separated-values; charset=UTF-8' });
          res.write('late_chunk\nUInt8\n1\n');
          const t = setTimeout(() => res.end('2\n'), LATE_MS);
          res.on('close', () => clearTimeout(t));
        } else {
          res.statusCode = 500;
          res.end(`Code: 62, e.displayText() = DB::Exception: unexpected statement\n`);
        }
      });
    });
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    // fetch with its head wait scaled down from 300 s to HEAD_WAIT_MS (the adapter must not depend on it)
    globalThis.fetch = (async (input: Parameters<typeof fetch>[0], init?: Parameters<typeof fetch>[1]) => {
      const signal = AbortSignal.any([AbortSignal.timeout(HEAD_WAIT_MS), ...(init?.signal ? [init.signal] : [])]);
      return realFetch(input, { ...init, signal });
    }) as typeof fetch;
  });

  afterAll(async () => {
    globalThis.fetch = realFetch;
    server.closeAllConnections();
    await new Promise<void>((resolve) => server.close(() => resolve()));
  });

  it('an answer head later than the short wait arrives when the statement limit is longer', async () => {
    const engine = await connectClickHouse({ server: url, credentials: { user: 'default', password: '' }, timeoutMs: 5000 });
    try {
      const t = await engine.query('SELECT 7 AS late_head');
      expect(t.names).toEqual(['late_head']);
      expect(t.columns[0]).toEqual([7]);
    } finally {
      await engine.close();
    }
  });

  it('a body chunk later than the short wait arrives when the statement limit is longer', async () => {
    const engine = await connectClickHouse({ server: url, credentials: { user: 'default', password: '' }, timeoutMs: 5000 });
    try {
      const t = await engine.query('SELECT number AS late_chunk FROM numbers(2)');
      expect(t.columns[0]).toEqual([1, 2]);
    } finally {
      await engine.close();
    }
  });

  it('a head later than the statement limit is a timeout, and the statement is killed by its query id', async () => {
    const engine = await connectClickHouse({ server: url, credentials: { user: 'default', password: '' }, timeoutMs: 600 });
    try {
      const before = seen.length;
      const e = await engine.query('SELECT 7 AS late_head').then(() => null, (x: unknown) => x);
      expect(e).toBeInstanceOf(EngineError);
      expect((e as EngineError).code).toBe('timeout');
      expect((e as EngineError).message).toMatch(/did not finish within 1 s/);
      await new Promise((r) => setTimeout(r, 300));
      const sent = seen.slice(before);
      const statement = sent.find((s) => s.sql.includes('late_head'));
      expect(statement?.queryId).toMatch(/^counterweight-/);
      expect(sent.some((s) => s.sql === `KILL QUERY WHERE query_id = '${statement?.queryId}' ASYNC`)).toBe(true);
    } finally {
      await engine.close();
    }
  });
});
