import { describe, expect, it } from 'vitest';
import type { HostReply, HostRequest } from '../../../app/engine/host/messages.ts';
import type { EngineHost } from '../../../app/main/engine-host.ts';
import { type DialogApi, PathGrants, type RecentStore } from '../../../app/main/file-access.ts';
import { createHandlers } from '../../../app/main/handlers.ts';
import type { RecentLog } from '../../../app/main/ipc-contract.ts';
import { desktopPaths } from '../../../app/main/paths.ts';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';

function setup(picked: string[] | null, hostDown = false) {
  const sent: HostRequest[] = [];
  const replies: HostReply[] = [];
  const engine: EngineHost<HostRequest> = {
    send: (r) => {
      if (hostDown) throw new Error('The engine stopped and is restarting.');
      sent.push(r);
    },
    status: () => ({ state: 'ready' }),
    stop: () => undefined,
  };
  let recentList: RecentLog[] = [];
  const recent: RecentStore = {
    load: async () => recentList,
    add: async (paths) => (recentList = [{ paths: [...paths], openedAt: 't' }, ...recentList]),
  };
  const dialog: DialogApi = {
    showOpenDialog: async () => (picked === null ? { canceled: true, filePaths: [] } : { canceled: false, filePaths: picked }),
    showSaveDialog: async () => ({ canceled: true }),
  };
  const grants = new PathGrants();
  const launch = { paths: ['/opt/cw/sample-data/maple-row-demo.parquet'], source: 'demo' as const };
  grants.grant(launch.paths);
  const printed: unknown[] = [];
  const contents = { printToPDF: async (o: unknown) => (printed.push(o), new Uint8Array()) };
  const handlers = createHandlers<null>({ launch, grants, recent, dialog, engine, contents, replyToRenderer: (r) => replies.push(r) });
  return { handlers, sent, grants, printed, replies };
}

const register = (id: number, paths: string[]): HostRequest => ({ kind: 'register', id, source: { kind: 'path', paths } });

describe('createHandlers', () => {
  it('relays a register request for the launch log to the engine host', async () => {
    const { handlers, sent } = setup(null);
    await handlers['engine:send'](null, register(1, ['/opt/cw/sample-data/maple-row-demo.parquet']));
    expect(sent).toEqual([register(1, ['/opt/cw/sample-data/maple-row-demo.parquet'])]);
  });

  it('refuses to register a path the user never opened: nothing is relayed, the request gets an error reply', async () => {
    const { handlers, sent, replies } = setup(null);
    await handlers['engine:send'](null, register(2, ['/home/ana/.aws/credentials']));
    expect(sent).toEqual([]);
    expect(replies).toEqual([{ kind: 'error', id: 2, code: 'io', message: expect.stringMatching(/credentials" was not opened/) }]);
  });

  it('answers a request with a "closed" error reply while the engine host is down', async () => {
    const { handlers, replies } = setup(null, true);
    await handlers['engine:send'](null, { kind: 'ping', id: 4 });
    expect(replies).toEqual([{ kind: 'error', id: 4, code: 'closed', message: 'The engine stopped and is restarting.' }]);
  });

  it('makes a log picked in the open dialog readable', async () => {
    const { handlers, sent } = setup(['/data/june.parquet']);
    expect(await handlers['log:choose'](null)).toEqual(['/data/june.parquet']);
    await handlers['engine:send'](null, register(3, ['/data/june.parquet']));
    expect(sent).toHaveLength(1);
  });

  it('a cancelled dialog grants nothing', async () => {
    const { handlers, grants } = setup(null);
    expect(await handlers['log:choose'](null)).toBeNull();
    expect(grants.has('/data/june.parquet')).toBe(false);
  });

  it('adds only opened logs to the recent list', async () => {
    const { handlers } = setup(null);
    expect(await handlers['recent:add'](null, ['/opt/cw/sample-data/maple-row-demo.parquet'])).toHaveLength(1);
    await expect(async () => handlers['recent:add'](null, ['/etc/shadow'])).rejects.toThrow(/was not opened/);
    expect(await handlers['recent:list'](null)).toHaveLength(1);
  });

  it('answers the launch log and the engine status', async () => {
    const { handlers } = setup(null);
    expect(await handlers['launch:log'](null)).toEqual({ paths: ['/opt/cw/sample-data/maple-row-demo.parquet'], source: 'demo' });
    expect(await handlers['engine:status'](null)).toEqual({ state: 'ready' });
  });

  it('reads saved reports picked for a history in the main process, and grants the engine nothing', async () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), 'cw-history-pick-'));
    const file = path.join(dir, 'week1.json');
    writeFileSync(file, '{"schema":"counterweight.report/1"}');
    const { handlers, grants, sent } = setup([file]);
    expect(await handlers['reports:choose'](null)).toEqual([{ name: 'week1.json', text: '{"schema":"counterweight.report/1"}' }]);
    expect(grants.has(file)).toBe(false);
    expect(sent).toEqual([]);
    rmSync(dir, { recursive: true });
  });

  it('a cancelled print dialog prints nothing', async () => {
    const { handlers, printed } = setup(null);
    expect(await handlers['report:print-pdf'](null, {})).toBeNull();
    expect(printed).toEqual([]);
  });
});

describe('desktopPaths', () => {
  it('finds the bundles beside main.cjs and the renderer and demo log from the app root', () => {
    const dir = path.resolve('/opt/cw/dist/electron');
    expect(desktopPaths(dir)).toEqual({
      preload: path.join(dir, 'preload.cjs'),
      engineHostEntry: path.join(dir, 'engine-host.cjs'),
      rendererRoot: path.resolve('/opt/cw/dist/renderer'),
      demoLog: path.resolve('/opt/cw/sample-data/maple-row-demo.parquet'),
    });
  });
});
