import { EventEmitter } from 'node:events';
import { afterAll, describe, expect, it } from 'vitest';
import { createHostEngine } from '../../../app/engine/host/client.ts';
import type { HostMessage } from '../../../app/engine/host/protocol.ts';
import { createNativeEngine, type NativeEngine } from '../../../app/engine/native.ts';
import { parentPortTransport, serveOverParentPort } from '../../../app/main/utility-host.ts';

/** Plays Electron's process.parentPort: arrivals are MessageEvent-like `{ data }` objects. */
class FakeParentPort extends EventEmitter {
  readonly posted: unknown[] = [];
  onPost: ((message: unknown) => void) | null = null;
  postMessage(message: unknown): void {
    this.posted.push(message);
    this.onPost?.(message);
  }
  deliver(data: unknown): void {
    this.emit('message', { data });
  }
}

describe('parentPortTransport', () => {
  it('unwraps { data } arrivals and posts replies as they are', () => {
    const port = new FakeParentPort();
    const transport = parentPortTransport(port);
    const seen: unknown[] = [];
    transport.onMessage((m) => seen.push(m));
    port.deliver({ kind: 'ping', id: 1 });
    transport.send({ kind: 'pong', id: 1, protocol: 1 });
    expect(seen).toEqual([{ kind: 'ping', id: 1 }]);
    expect(port.posted).toEqual([{ kind: 'pong', id: 1, protocol: 1 }]);
  });

  it('holds arrivals while detached and hands them, in order, to the next listener', () => {
    const port = new FakeParentPort();
    const transport = parentPortTransport(port);
    port.deliver('a');
    transport.onMessage(() => undefined);
    transport.detach();
    port.deliver('b');
    port.deliver('c');
    const seen: unknown[] = [];
    transport.onMessage((m) => seen.push(m));
    expect(seen).toEqual(['b', 'c']);
  });
});

describe('serveOverParentPort (real native engine)', () => {
  const engines: NativeEngine[] = [];
  const port = new FakeParentPort();
  const client = createHostEngine({
    send: (message: HostMessage) => queueMicrotask(() => port.deliver(message)),
    onMessage: (listener) => {
      port.onPost = listener;
    },
  });
  const served = serveOverParentPort(port, async () => {
    const engine = await createNativeEngine({ threads: 1 });
    engines.push(engine);
    return engine;
  });
  afterAll(async () => {
    await Promise.all(engines.map((e) => e.close().catch(() => undefined)));
  });

  it('answers a ping with the protocol version and runs SQL through the host protocol', async () => {
    await served;
    expect(await client.ping()).toBe(1);
    const table = await client.query('select 42 as answer');
    expect(table.names).toEqual(['answer']);
    expect(table.columns).toEqual([[42]]);
  });

  it('opens a fresh engine after a close, so earlier tables are gone', async () => {
    await client.query('create table kept as select 1 as x');
    await client.query('select * from kept');
    const repliesBefore = port.posted.length;
    await client.close();
    expect(port.posted.length).toBeGreaterThan(repliesBefore);
    await expect.poll(() => engines.length).toBe(2);
    await expect(client.query('select * from kept')).rejects.toThrow(/kept/);
    expect((await client.query('select 7 as n')).columns).toEqual([[7]]);
  });
});
