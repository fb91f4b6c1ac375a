import { EventEmitter } from 'node:events';
import { describe, expect, it } from 'vitest';
import { ENGINE_SERVICE_NAME, type ForkUtility, startEngineHost } from '../../../app/main/engine-host.ts';
import type { EngineHostStatus } from '../../../app/main/ipc-contract.ts';

/** Records fork arguments and posted messages; `emit` plays the utility process's side. */
class FakeUtilityProcess extends EventEmitter {
  readonly posted: unknown[] = [];
  killed = false;
  postMessage(message: unknown): void {
    this.posted.push(message);
  }
  kill(): boolean {
    this.killed = true;
    return true;
  }
}

function harness(overrides: { maxRestarts?: number } = {}) {
  const forks: { modulePath: string; args: string[]; options: unknown; process: FakeUtilityProcess }[] = [];
  const fork: ForkUtility = (modulePath, args, options) => {
    const process = new FakeUtilityProcess();
    forks.push({ modulePath, args, options, process });
    return process;
  };
  const replies: unknown[] = [];
  const statuses: EngineHostStatus[] = [];
  const invalid: unknown[] = [];
  const timers: (() => void)[] = [];
  let clock = 0;
  const host = startEngineHost<{ kind: string }, { kind: string }>({
    fork,
    entryPath: '/app/dist/electron/engine-host.cjs',
    parseReply: (message) => {
      if (typeof message !== 'object' || message === null || typeof (message as { kind?: unknown }).kind !== 'string') throw new Error('not a reply');
      return message as { kind: string };
    },
    onReply: (reply) => replies.push(reply),
    onStatus: (status) => statuses.push(status),
    onInvalid: (error) => invalid.push(error),
    schedule: (callback) => timers.push(callback),
    now: () => clock,
    ...overrides,
  });
  const latest = (): FakeUtilityProcess => {
    const last = forks[forks.length - 1];
    if (!last) throw new Error('no fork');
    return last.process;
  };
  return { host, forks, replies, statuses, invalid, timers, latest, advance: (ms: number) => (clock += ms) };
}

describe('startEngineHost', () => {
  it('forks the bundled entry as a named utility process', () => {
    const { forks, statuses, latest } = harness();
    expect(forks).toHaveLength(1);
    expect(forks[0]).toMatchObject({ modulePath: '/app/dist/electron/engine-host.cjs', args: [], options: { serviceName: ENGINE_SERVICE_NAME } });
    expect(statuses).toEqual([{ state: 'starting' }]);
    latest().emit('spawn');
    expect(statuses.at(-1)).toEqual({ state: 'ready' });
  });

  it('relays requests to the process and its valid replies back', () => {
    const { host, replies, invalid, latest } = harness();
    host.send({ kind: 'ping' });
    expect(latest().posted).toEqual([{ kind: 'ping' }]);
    latest().emit('message', { kind: 'pong' });
    latest().emit('message', 'garbage');
    expect(replies).toEqual([{ kind: 'pong' }]);
    expect(invalid).toHaveLength(1);
  });

  it('restarts a process that died, and relays through the new one', () => {
    const { host, forks, statuses, timers, latest } = harness();
    const first = latest();
    first.emit('exit', 137);
    expect(statuses.at(-1)).toMatchObject({ state: 'restarting' });
    expect(() => host.send({ kind: 'ping' })).toThrow(/restarting/);
    timers.shift()?.();
    expect(forks).toHaveLength(2);
    host.send({ kind: 'ping' });
    expect(latest().posted).toEqual([{ kind: 'ping' }]);
    expect(first.posted).toEqual([]);
  });

  it('ignores messages and exits from a process it already replaced', () => {
    const { replies, forks, timers, latest } = harness();
    const first = latest();
    first.emit('exit', 1);
    timers.shift()?.();
    first.emit('message', { kind: 'late' });
    first.emit('exit', 1);
    expect(replies).toEqual([]);
    expect(forks).toHaveLength(2);
    expect(timers).toHaveLength(0);
  });

  it('gives up after too many deaths within the window, with a plain message', () => {
    const { statuses, timers, latest, forks } = harness({ maxRestarts: 2 });
    for (let i = 0; i < 3; i++) {
      latest().emit('exit', 1);
      timers.shift()?.();
    }
    expect(forks).toHaveLength(3);
    expect(statuses.at(-1)?.state).toBe('failed');
    expect(statuses.at(-1)?.message).toMatch(/restart the app/);
  });

  it('forgets deaths older than the window', () => {
    const { statuses, timers, latest, advance, forks } = harness({ maxRestarts: 1 });
    latest().emit('exit', 1);
    timers.shift()?.();
    advance(120_000);
    latest().emit('exit', 1);
    timers.shift()?.();
    expect(forks).toHaveLength(3);
    expect(statuses.at(-1)?.state).toBe('restarting');
  });

  it('stop() kills the process and does not restart it', () => {
    const { host, timers, latest } = harness();
    const process = latest();
    host.stop();
    expect(process.killed).toBe(true);
    process.emit('exit', 0);
    expect(timers).toHaveLength(0);
  });
});
