import { describe, expect, it } from 'vitest';
import { spawnHostChild } from '../../app/engine/host/spawn.ts';
import { decodeTable } from '../../app/engine/host/protocol.ts';
import type { HostReply } from '../../app/engine/host/protocol.ts';
import { serveEngine } from '../../app/engine/host/server.ts';
import type { Transport } from '../../app/engine/host/transport.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { engineSuite } from './suite.ts';

engineSuite('host (child process)', async () => {
  const engine = spawnHostChild();
  await engine.ping();
  return engine;
}, { formats: ['parquet', 'csv', 'ndjson'], cancellable: true });

describe('engine host server over an in-memory transport', () => {
  it('answers requests, reports progress and rejects malformed messages', async () => {
    const toClient: unknown[] = [];
    let deliver: (message: unknown) => void = () => undefined;
    const serverSide: Transport = {
      // JSON text in between, as any real carrier would have.
      send: (message) => { toClient.push(JSON.parse(JSON.stringify(message))); },
      onMessage: (listener) => { deliver = listener; },
    };
    const engine = await createNativeEngine({ threads: 1 });
    serveEngine(serverSide, engine, { progressIntervalMs: 20 });
    const settle = async (id: number): Promise<void> => {
      while (!toClient.some((m) => (m as HostReply).id === id && (m as HostReply).kind !== 'progress')) await new Promise((r) => setTimeout(r, 10));
    };

    deliver({ kind: 'ping', id: 1 });
    await settle(1);
    expect(toClient).toContainEqual({ kind: 'pong', id: 1, protocol: 1 });

    deliver({ kind: 'query', id: 2, sql: 'SELECT count(*)::BIGINT AS n FROM range(300000000) WHERE range % 7 = 0' });
    await settle(2);
    const forQuery = toClient.filter((m) => (m as HostReply).id === 2) as HostReply[];
    expect(forQuery[0]).toEqual({ kind: 'progress', id: 2, stage: 'started' });
    expect(forQuery.some((m) => m.kind === 'progress' && m.stage === 'finished')).toBe(true);
    // ceil(300000000 / 7) multiples of 7 in [0, 3e8): 42857143.
    const result = forQuery.find((m) => m.kind === 'result');
    expect(result && result.kind === 'result' && decodeTable(result.table).columns[0]).toEqual([42857143n]);

    deliver({ kind: 'query', id: 3 });
    deliver({ kind: 'hello' });
    await settle(3);
    expect(toClient).toContainEqual({ kind: 'error', id: 3, code: 'internal', message: 'Malformed engine host message: "sql" must be a string.' });
    expect(toClient).toContainEqual(expect.objectContaining({ kind: 'error', id: 0, code: 'internal' }));

    deliver({ kind: 'close', id: 4 });
    await settle(4);
    expect(toClient).toContainEqual({ kind: 'done', id: 4 });
  });
});
