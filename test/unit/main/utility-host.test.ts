import { readFileSync } from 'node:fs';
import { EventEmitter } from 'node:events';
import { afterAll, describe, expect, it } from 'vitest';
import { createHostEngine } from '../../../app/engine/host/client.ts';
import type { HostMessage } from '../../../app/engine/host/messages.ts';
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

const DEMO_CSV = new URL('../../../sample-data/maple-row-demo.csv', import.meta.url).pathname;
// The generator's manifest beside the demo log states its row count.
const DEMO_ROWS = (JSON.parse(readFileSync(new URL('../../../sample-data/maple-row-demo.manifest.json', import.meta.url), 'utf8')) as { generator: { rows: number } }).generator.rows;

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

  it('answers a ping with the protocol version and registers and profiles a log through the host protocol', async () => {
    await served;
    expect(await client.ping()).toBe(2);
    const { source } = await client.register({ kind: 'path', paths: [DEMO_CSV] });
    expect((await client.profile(source.relation)).rows).toBe(DEMO_ROWS);
  });

  it('opens a fresh engine after a close, so earlier sources are gone', async () => {
    const { source } = await client.register({ kind: 'path', paths: [DEMO_CSV] });
    const repliesBefore = port.posted.length;
    await client.close();
    expect(port.posted.length).toBeGreaterThan(repliesBefore);
    await expect.poll(() => engines.length).toBe(2);
    await expect(client.profile(source.relation)).rejects.toThrow(/No log is registered as/);
    const again = await client.register({ kind: 'path', paths: [DEMO_CSV] });
    expect((await client.profile(again.source.relation)).rows).toBe(DEMO_ROWS);
  });
});
