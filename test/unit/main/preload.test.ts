import { beforeAll, describe, expect, it, vi } from 'vitest';
import type { CounterweightApi } from '../../../app/main/ipc-contract.ts';

const exposed = new Map<string, unknown>();
const invoked: unknown[][] = [];
const listeners = new Map<string, ((event: unknown, payload: unknown) => void)[]>();

vi.mock('electron', () => ({
  contextBridge: { exposeInMainWorld: (key: string, api: unknown) => exposed.set(key, api) },
  ipcRenderer: {
    invoke: async (...args: unknown[]) => {
      invoked.push(args);
      return 'answer';
    },
    on: (channel: string, listener: (event: unknown, payload: unknown) => void) => listeners.set(channel, [...(listeners.get(channel) ?? []), listener]),
    removeListener: (channel: string, listener: unknown) => listeners.set(channel, (listeners.get(channel) ?? []).filter((l) => l !== listener)),
  },
}));

describe('preload bridge', () => {
  let api: CounterweightApi;
  beforeAll(async () => {
    await import('../../../app/preload/index.ts');
    api = exposed.get('counterweight') as CounterweightApi;
  });

  it('exposes exactly one object, window.counterweight, of kind "desktop"', () => {
    expect([...exposed.keys()]).toEqual(['counterweight']);
    expect(api.kind).toBe('desktop');
  });

  it.each([
    ['launchLog', [], ['launch:log']],
    ['chooseLog', [], ['log:choose']],
    ['recentLogs', [], ['recent:list']],
    ['addRecentLog', [['/a.parquet']], ['recent:add', ['/a.parquet']]],
    ['chooseTargetTable', [], ['target-table:choose']],
    ['chooseReports', [], ['reports:choose']],
    ['saveReport', [{ format: 'json', contents: '{}' }], ['report:save', { format: 'json', contents: '{}' }]],
    ['printReportToPdf', [], ['report:print-pdf', {}]],
  ] as const)('%s invokes its channel', async (method, args, expected) => {
    invoked.length = 0;
    const call = api[method] as (...a: unknown[]) => Promise<unknown>;
    expect(await call(...args)).toBe('answer');
    expect(invoked).toEqual([expected]);
  });

  it('engine.send invokes engine:send with the protocol message', async () => {
    invoked.length = 0;
    await api.engine.send({ kind: 'ping', id: 1 });
    expect(invoked).toEqual([['engine:send', { kind: 'ping', id: 1 }]]);
  });

  it('engine.onMessage hands over the payload only (never the IPC event) and unsubscribes', () => {
    const seen: unknown[][] = [];
    const off = api.engine.onMessage((...args) => seen.push(args));
    listeners.get('engine:message')?.forEach((l) => l({ sender: 'secret' }, { kind: 'pong', id: 1, protocol: 1 }));
    expect(seen).toEqual([[{ kind: 'pong', id: 1, protocol: 1 }]]);
    off();
    expect(listeners.get('engine:message')).toEqual([]);
  });

  it('engine.onStatus listens on engine:status-changed', () => {
    const seen: unknown[] = [];
    const off = api.engine.onStatus((status) => seen.push(status));
    listeners.get('engine:status-changed')?.forEach((l) => l({}, { state: 'restarting' }));
    off();
    expect(seen).toEqual([{ state: 'restarting' }]);
  });
});
