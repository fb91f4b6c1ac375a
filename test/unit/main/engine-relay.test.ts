import { EventEmitter } from 'node:events';
import { describe, expect, it } from 'vitest';
import { createHostEngine } from '../../../app/engine/host/client.ts';
import type { HostReply } from '../../../app/engine/host/messages.ts';
import { startEngineRelay } from '../../../app/main/engine-relay.ts';
import type { EngineHostStatus } from '../../../app/main/ipc-contract.ts';

class FakeUtilityProcess extends EventEmitter {
  readonly posted: unknown[] = [];
  postMessage(message: unknown): void {
    this.posted.push(message);
  }
  kill(): boolean {
    return true;
  }
}

function relayHarness() {
  const processes: FakeUtilityProcess[] = [];
  const replyListeners: ((reply: HostReply) => void)[] = [];
  const statuses: EngineHostStatus[] = [];
  const timers: (() => void)[] = [];
  const relayed: HostReply[] = [];
  replyListeners.push((reply) => relayed.push(reply));
  const relay = startEngineRelay({
    fork: () => {
      const p = new FakeUtilityProcess();
      processes.push(p);
      return p;
    },
    entryPath: '/engine-host.cjs',
    onReply: (reply) => replyListeners.forEach((l) => l(reply)),
    onStatus: (status) => statuses.push(status),
    schedule: (callback) => timers.push(callback),
  });
  // The renderer side: the real protocol client over what the preload would carry.
  const client = createHostEngine({
    send: (message) => relay.send(message as never),
    onMessage: (listener) => replyListeners.push(listener),
  });
  const current = (): FakeUtilityProcess => processes[processes.length - 1] as FakeUtilityProcess;
  return { relay, client, current, statuses, timers, processes, relayed };
}

describe('startEngineRelay', () => {
  it('passes requests through and resolves the client with the host reply', async () => {
    const { client, current } = relayHarness();
    const answer = client.drillCount({ source: '"src_1"', roles: { time: null, decision_id: null, action: 'promotion' }, selection: { segment: { region: 'old-town' } } });
    expect(current().posted).toEqual([{ kind: 'drill-count', id: 1, source: '"src_1"', roles: { time: null, decision_id: null, action: 'promotion' }, selection: { segment: { region: 'old-town' } } }]);
    current().emit('message', { kind: 'count', id: 1, rows: 42 });
    expect(await answer).toBe(42);
  });

  it('answers requests in flight with a "closed" error when the host dies, instead of leaving them hanging', async () => {
    const { client, current, timers, processes } = relayHarness();
    const pending = client.profile('"src_1"');
    current().emit('exit', 139);
    await expect(pending).rejects.toMatchObject({ code: 'closed', message: expect.stringMatching(/restarting/) });
    timers.shift()?.();
    expect(processes).toHaveLength(2);
    const next = client.ping();
    current().emit('message', { kind: 'pong', id: 2, protocol: 2 });
    expect(await next).toBe(2);
  });

  it('keeps an audit waiting through its progress, and fails it with "closed" if the host dies before the result', async () => {
    const { client, current } = relayHarness();
    const stages: string[] = [];
    const pending = client.audit({ source: '"src_1"' }, (p) => stages.push(`${p.stage}${p.done ? ' done' : ''}`));
    expect(current().posted).toEqual([{ kind: 'audit', id: 1, request: { source: '"src_1"' } }]);
    current().emit('message', { kind: 'audit-progress', id: 1, stage: 'profile' });
    current().emit('message', { kind: 'audit-progress', id: 1, stage: 'profile', done: true });
    current().emit('exit', 139);
    await expect(pending).rejects.toMatchObject({ code: 'closed' });
    expect(stages).toEqual(['profile', 'profile done']);
  });

  it('drops replies from the host that are not protocol replies', () => {
    const { current, statuses, relayed } = relayHarness();
    current().emit('spawn');
    current().emit('message', { kind: 'audit', id: 1, request: { source: '"src_1"' } });
    current().emit('message', { kind: 'rows', id: 1, table: 'nope' });
    current().emit('message', { kind: 'pong', id: 1, protocol: 1 });
    expect(relayed).toEqual([{ kind: 'pong', id: 1, protocol: 1 }]);
    expect(statuses).toEqual([{ state: 'starting' }, { state: 'ready' }]);
  });
});
