/**
 * Security regressions through the desktop IPC path: Electron's ipcMain played by a fake, the real
 * channel validation and handlers (app/main/ipc.ts, handlers.ts), and behind them the real utility-process
 * host (app/main/utility-host.ts) serving a locked native engine, as the renderer would reach it.
 */
import { EventEmitter } from 'node:events';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { HostReply, HostRequest } from '../../app/engine/host/messages.ts';
import { parseHostReply } from '../../app/engine/host/replies.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';
import type { EngineHost } from '../../app/main/engine-host.ts';
import { PathGrants } from '../../app/main/file-access.ts';
import { createHandlers } from '../../app/main/handlers.ts';
import { IpcValidationError, registerIpc } from '../../app/main/ipc.ts';
import { serveOverParentPort } from '../../app/main/utility-host.ts';
import { scratchTree, SECRET_TEXT, type Tree } from './fixture.ts';

class FakeParentPort extends EventEmitter {
  onPost: ((message: unknown) => void) | null = null;
  postMessage(message: unknown): void { this.onPost?.(message); }
  deliver(data: unknown): void { this.emit('message', { data }); }
}

let tree: Tree;
let before: { hash: string; listing: string[] };
const engines: NativeEngine[] = [];
const replies: HostReply[] = [];
const channels = new Map<string, (event: unknown, ...args: unknown[]) => unknown>();
const page = { sender: 'app-contents', url: 'counterweight://app/index.html' };

beforeAll(async () => {
  tree = scratchTree();
  before = { hash: tree.logHash(), listing: tree.listing() };
  const port = new FakeParentPort();
  port.onPost = (m) => replies.push(parseHostReply(m));
  await serveOverParentPort(port, async () => {
    const engine = await createNativeEngine({ restrictFileAccess: true, threads: 1 });
    engines.push(engine);
    return engine;
  });
  const engine: EngineHost<HostRequest> = { send: (r) => port.deliver(structuredClone(r)), status: () => ({ state: 'ready' }), stop: () => undefined };
  const grants = new PathGrants();
  grants.grant([tree.log]);
  const handlers = createHandlers<typeof page>({
    launch: { paths: [tree.log], source: 'argument' },
    grants,
    recent: { load: async () => [], add: async () => [] },
    dialog: { showOpenDialog: async () => ({ canceled: true, filePaths: [] }), showSaveDialog: async () => ({ canceled: true }) },
    engine,
    replyToRenderer: (r) => replies.push(r),
    contents: { printToPDF: async () => new Uint8Array() },
  });
  registerIpc<typeof page>({ handle: (channel, listener) => channels.set(channel, listener as (event: unknown, ...args: unknown[]) => unknown) }, handlers, (event) => event === page);
});
afterAll(async () => {
  await Promise.all(engines.map((e) => e.close().catch(() => undefined)));
  expect(tree.logHash(), 'the registered log is unchanged').toBe(before.hash);
  expect(tree.listing(), 'no file was created').toEqual(before.listing);
  tree.remove();
});

async function send(message: unknown): Promise<HostReply> {
  const id = (message as { id: number }).id;
  await channels.get('engine:send')?.(page, message);
  await expect.poll(() => replies.some((r) => r.id === id && r.kind !== 'audit-progress'), { timeout: 20_000 }).toBe(true);
  return replies.find((r) => r.id === id && r.kind !== 'audit-progress') as HostReply;
}

describe('desktop IPC: the renderer reaches the engine through named requests only', () => {
  it.each([
    ['a raw query', { kind: 'query', id: 1, sql: `COPY (SELECT 1) TO '${path.join(tree?.victim ?? '/tmp', 'planted.sh')}'` }],
    ['a query hidden in a ping', { kind: 'ping', id: 2, sql: 'SELECT 1' }],
    ['a finding predicate in a drill-down', { kind: 'drill-count', id: 3, source: '"src_1"', roles: { time: null, decision_id: null, action: null }, selection: { segment: {}, where: 'TRUE) TO \'/tmp/x\' --' } }],
    ['SQL as the source handle', { kind: 'profile', id: 4, source: `read_text('/etc/passwd')` }],
    ['a reply posing as a request', { kind: 'audit-result', id: 5, report: {}, cube: new Uint8Array() }],
  ])('issue 18 #1: %s is refused before it reaches the engine', async (_what, message) => {
    let thrown: unknown;
    try {
      await channels.get('engine:send')?.(page, message);
    } catch (error) {
      thrown = error;
    }
    expect(thrown).toBeInstanceOf(IpcValidationError);
  });

  it('issue 18 #1: a file the user did not open cannot be registered, and nothing of it is returned', async () => {
    const reply = await send({ kind: 'register', id: 10, source: { kind: 'path', paths: [tree.secret] } });
    expect(reply).toMatchObject({ kind: 'error', code: 'io', message: expect.stringMatching(/was not opened/) });
    expect(JSON.stringify(reply)).not.toContain(SECRET_TEXT);
  });

  it('issue 18 #1: the opened log registers and profiles; a glob of its folder is not an opened path', async () => {
    const registered = await send({ kind: 'register', id: 11, source: { kind: 'path', paths: [tree.log] } });
    expect(registered).toMatchObject({ kind: 'registered', source: { files: [tree.log] } });
    const relation = registered.kind === 'registered' ? registered.source.relation : '';
    expect(await send({ kind: 'profile', id: 12, source: relation })).toMatchObject({ kind: 'profiled' });
    expect(await send({ kind: 'register', id: 13, source: { kind: 'path', paths: [path.join(tree.logs, '*')] } })).toMatchObject({ kind: 'error', code: 'io', message: expect.stringMatching(/was not opened/) });
  });
});
