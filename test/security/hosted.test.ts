/**
 * Security regressions through the real hosted server (scripts/web/hosted-server.ts, as `npm run web --
 * --host --logs DIR` starts it), with the right token and Origin, i.e. what a script injected into the
 * page could do. Each socket gets its own engine process (app/engine/host/child-main.ts).
 */
import path from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { createHostEngine, type HostEngine } from '../../app/engine/host/client.ts';
import { decodeFrame, encodeFrame } from '../../app/engine/host/frames.ts';
import { newToken } from '../../scripts/web/access.ts';
import { createHostedServer, type HostedServer } from '../../scripts/web/hosted-server.ts';
import { scratchTree, SECRET_TEXT, type Tree } from './fixture.ts';

let tree: Tree;
let server: HostedServer;
let before: { hash: string; listing: string[] };
const token = newToken();
const sockets: WebSocket[] = [];

beforeAll(async () => {
  tree = scratchTree();
  before = { hash: tree.logHash(), listing: tree.listing() };
  server = await createHostedServer({ port: 0, token, logFolders: [tree.logs] });
});
afterAll(async () => {
  for (const ws of sockets) ws.terminate();
  await server.close();
  tree.remove();
});
afterEach(() => {
  expect(tree.logHash(), 'the registered log is unchanged').toBe(before.hash);
  expect(tree.listing(), 'no file was created').toEqual(before.listing);
});

async function open(): Promise<WebSocket> {
  const ws = new WebSocket(`${server.socketUrl}?token=${token}`, { origin: server.origin });
  await new Promise<void>((resolve, reject) => { ws.once('open', () => resolve()); ws.once('error', reject); });
  sockets.push(ws);
  return ws;
}

/** Sends one raw message and resolves with the reply carrying its id. */
function raw(ws: WebSocket, message: Record<string, unknown>): Promise<Record<string, unknown>> {
  return new Promise((resolve) => {
    const onMessage = (data: WebSocket.RawData, isBinary: boolean) => {
      const reply = decodeFrame(isBinary ? new Uint8Array(data as Buffer) : String(data)) as Record<string, unknown>;
      if (reply.id === message.id && reply.kind !== 'audit-progress') {
        ws.off('message', onMessage);
        resolve(reply);
      }
    };
    ws.on('message', onMessage);
    ws.send(JSON.stringify(message));
  });
}

function client(ws: WebSocket): HostEngine {
  return createHostEngine({
    send: (m) => ws.send(encodeFrame(m)),
    onMessage: (l) => ws.on('message', (data, isBinary) => l(decodeFrame(isBinary ? new Uint8Array(data as Buffer) : String(data)))),
    onClose: (l) => ws.once('close', (code) => l(`closed ${code}`)),
  });
}

const noSecret = (reply: unknown) => expect(JSON.stringify(reply)).not.toContain(SECRET_TEXT);

describe('hosted mode: the page can read only logs in --logs, by name', () => {
  it.each([
    ['an absolute path outside --logs', () => tree.secret, /is not a plain file name/],
    ['a relative path climbing out', () => '../secret.txt', /is not a plain file name/],
    ['a glob', () => '*.csv', /is not a plain file name/],
    ['the --logs folder itself', () => tree.logs, /is not a plain file name/],
    ['a link in --logs to a file outside it', () => 'link-out.csv', /is a link to a file outside its folder/],
  ])('issue 18 #1: registering %s is refused and returns nothing of it', async (_what, name, why) => {
    const ws = await open();
    const reply = await raw(ws, { kind: 'register', id: 1, source: { kind: 'path', paths: [name()], format: 'csv' } });
    expect(reply).toMatchObject({ kind: 'error', code: 'io', message: expect.stringMatching(why) });
    noSecret(reply);
  });

  it('issue 18 #1: a failed registration of <dir>/*.nomatch grants nothing, and no message can write or run SQL', async () => {
    const ws = await open();
    expect(await raw(ws, { kind: 'register', id: 1, source: { kind: 'path', paths: [path.join(tree.root, '*.nomatch')], format: 'csv' } })).toMatchObject({ kind: 'error', code: 'io' });
    const writes = [
      { kind: 'query', id: 2, sql: `COPY (SELECT 'x') TO '${path.join(tree.victim, 'planted.sh')}'` },
      { kind: 'query', id: 3, sql: `SELECT * FROM read_text('${tree.secret}')` },
      { kind: 'query', id: 4, sql: `COPY (SELECT 1) TO '${tree.log}' (USE_TMP_FILE false)` },
      { kind: 'ping', id: 5, sql: `COPY (SELECT 1) TO '${tree.log}'` },
    ];
    for (const message of writes) {
      const reply = await raw(ws, message);
      expect(reply).toMatchObject({ kind: 'error', code: 'internal', message: expect.stringMatching(/^Malformed engine host request/) });
      noSecret(reply);
    }
  });

  it('issue 18 #1: SQL put into the typed fields of a request is quoted by the builders or refused, never run', async () => {
    const engine = client(await open());
    const { source } = await engine.register({ kind: 'path', paths: ['a.csv'] });
    const injected = `promotion" FROM ${source.relation}; COPY (SELECT 1) TO '${path.join(tree.victim, 'x.csv')}'; --`;
    await expect(engine.audit({ source: source.relation, roles: { action: injected } })).rejects.toThrow(/does not exist/);
    await expect(engine.drillCount({ source: source.relation, roles: { time: null, decision_id: null, action: 'promotion' }, selection: { segment: { [injected]: `x' OR 1=1; COPY (SELECT 1) TO '${tree.log}'; --` } } }))
      .rejects.toMatchObject({ code: 'sql' });
    expect(await engine.drillCount({ source: source.relation, roles: { time: null, decision_id: null, action: 'promotion' }, selection: { segment: {}, action: `bakery' OR '1'='1` } })).toBe(0);
    await expect(engine.profile(`${source.relation} UNION SELECT content FROM read_text('${tree.secret}')`)).rejects.toThrow(/must be a source the engine registered/);
  });
});

describe('hosted mode: results are bounded, and sessions are apart', () => {
  it('issue 18 #5: a page larger than the cap cannot be asked for', async () => {
    const ws = await open();
    const engine = client(ws);
    const { source } = await engine.register({ kind: 'path', paths: ['a.csv'] });
    const reply = await raw(ws, { kind: 'drill-page', id: 99, source: source.relation, roles: { time: null, decision_id: null, action: null }, selection: { segment: {} }, page: { offset: 0, limit: 20_000_000 } });
    expect(reply).toMatchObject({ kind: 'error', message: expect.stringMatching(/"page.limit" .*1000/) });
  });

  it('issue 18 #5: every socket has its own engine process; one dying leaves the others answering', async () => {
    const first = client(await open());
    const second = client(await open());
    await first.connect();
    await second.connect();
    const pids = server.enginePids();
    expect(new Set(pids).size).toBe(pids.length);
    expect(pids).not.toContain(process.pid);
    const before = new Set(pids);
    const { source } = await second.register({ kind: 'path', paths: ['a.csv'] });
    // The first socket's process is the one started for it: kill the newest but one.
    const victim = pids[pids.length - 2] as number;
    process.kill(victim, 'SIGKILL');
    await expect.poll(() => first.ping().then(() => 'alive', (e: Error) => e.message), { timeout: 10_000 }).toMatch(/stopped|closed/);
    expect((await second.profile(source.relation)).rows).toBe(2);
    expect(server.enginePids().every((p) => before.has(p))).toBe(true);
  });
});
