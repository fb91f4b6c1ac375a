import { request as httpRequest } from 'node:http';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { createHostEngine } from '../../../app/engine/host/client.ts';
import type { Transport } from '../../../app/engine/host/transport.ts';
import { decodeFrame, encodeFrame } from '../../../app/engine/host/frames.ts';
import { newToken } from '../../../scripts/web/access.ts';
import { createHostedServer, type HostedServer } from '../../../scripts/web/hosted-server.ts';

/** Opens a socket and reports how the handshake ended: 'open' or the HTTP status of the refusal. */
function handshake(url: string, origin: string | undefined): Promise<{ outcome: 'open'; ws: WebSocket } | { outcome: number }> {
  return new Promise((resolve) => {
    const ws = new WebSocket(url, origin === undefined ? {} : { origin });
    ws.once('open', () => resolve({ outcome: 'open', ws }));
    ws.once('unexpected-response', (_req, res) => {
      resolve({ outcome: res.statusCode ?? -1 });
      ws.terminate();
    });
    ws.once('error', () => resolve({ outcome: -1 }));
  });
}

function get(port: number, pathname: string, host = `127.0.0.1:${port}`): Promise<{ status: number; headers: Record<string, unknown>; body: string }> {
  return new Promise((resolve, reject) => {
    const req = httpRequest({ host: '127.0.0.1', port, path: pathname, headers: { Host: host } }, (res) => {
      let body = '';
      res.setEncoding('utf8');
      res.on('data', (chunk: string) => (body += chunk));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body }));
    });
    req.on('error', reject);
    req.end();
  });
}

function clientTransport(ws: WebSocket): Transport {
  return {
    send: (message) => ws.send(encodeFrame(message)),
    onMessage: (listener) => ws.on('message', (data, isBinary) => listener(decodeFrame(isBinary ? new Uint8Array(data as Buffer) : String(data)))),
    onClose: (listener) => ws.once('close', (code) => listener(`closed ${code}`)),
  };
}

describe('hosted web server', () => {
  const token = newToken();
  let server: HostedServer;
  let root = '';
  const opened: WebSocket[] = [];

  beforeAll(async () => {
    root = await mkdtemp(path.join(os.tmpdir(), 'cw-web-'));
    await writeFile(path.join(root, 'index.html'), '<!doctype html><title>Counterweight</title>');
    await writeFile(path.join(root, 'maple-row-tiny.csv'), 'decision_id,promotion\nd1,bakery\n');
    server = await createHostedServer({ port: 0, token, staticRoot: root, demoFolder: root, logFolders: [root] });
  });

  afterAll(async () => {
    for (const ws of opened) ws.terminate();
    await server.close();
    await rm(root, { recursive: true, force: true });
  });

  const engineUrl = (query: string): string => `${server.socketUrl}${query}`;

  it('uses a fresh 256-bit hex token per launch', () => {
    expect(token).toMatch(/^[0-9a-f]{64}$/);
    expect(newToken()).not.toBe(token);
  });

  it('prints a page URL that carries the socket address and the token in its fragment, never in its query', () => {
    const url = new URL(server.url);
    expect(url.origin).toBe(server.origin);
    expect(url.search).toBe('');
    const fragment = new URLSearchParams(url.hash.slice(1));
    expect(fragment.get('host')).toBe(server.socketUrl);
    expect(fragment.get('token')).toBe(token);
    expect(server.origin).toBe(`http://127.0.0.1:${server.port}`);
  });

  it('refuses a connection without the token', async () => {
    expect((await handshake(engineUrl(''), server.origin)).outcome).toBe(401);
  });

  it('refuses a connection with a wrong token', async () => {
    const wrong = token.slice(0, -1) + (token.endsWith('0') ? '1' : '0');
    expect((await handshake(engineUrl(`?token=${wrong}`), server.origin)).outcome).toBe(401);
    expect((await handshake(engineUrl(`?token=${token}x`), server.origin)).outcome).toBe(401);
  });

  it('refuses a connection from another origin, or with no Origin, even with the right token', async () => {
    expect((await handshake(engineUrl(`?token=${token}`), 'http://evil.example')).outcome).toBe(403);
    expect((await handshake(engineUrl(`?token=${token}`), `http://localhost:${server.port + 1}`)).outcome).toBe(403);
    expect((await handshake(engineUrl(`?token=${token}`), undefined)).outcome).toBe(403);
  });

  it('refuses sockets on other paths', async () => {
    expect((await handshake(`ws://127.0.0.1:${server.port}/other?token=${token}`, server.origin)).outcome).toBe(404);
  });

  it('accepts the served origin with the token, and registers and profiles a log by its bare name', async () => {
    const result = await handshake(engineUrl(`?token=${token}`), server.origin);
    expect(result.outcome).toBe('open');
    if (result.outcome !== 'open') return;
    opened.push(result.ws);
    const engine = createHostEngine(clientTransport(result.ws));
    await engine.connect();
    const { source, inputs } = await engine.register({ kind: 'path', paths: ['maple-row-tiny.csv'] });
    expect(inputs.map((f) => [path.basename(f.path), f.bytes])).toEqual([['maple-row-tiny.csv', Buffer.byteLength('decision_id,promotion\nd1,bakery\n')]]);
    expect((await engine.profile(source.relation)).rows).toBe(1);
    await expect(engine.profile('"src_9"')).rejects.toMatchObject({ code: 'sql' });
  });

  it('answers a request sent in the same tick as the handshake, before the engine has opened', async () => {
    const result = await handshake(engineUrl(`?token=${token}`), server.origin);
    if (result.outcome !== 'open') throw new Error('socket refused');
    opened.push(result.ws);
    const reply = new Promise<unknown>((resolve) => result.ws.once('message', (data) => resolve(JSON.parse(String(data)))));
    result.ws.send(JSON.stringify({ kind: 'ping', id: 9 }));
    expect(await reply).toEqual({ kind: 'pong', id: 9, protocol: 2 });
  });

  it('answers a malformed frame with a protocol error instead of dropping the socket', async () => {
    const result = await handshake(engineUrl(`?token=${token}`), server.origin);
    if (result.outcome !== 'open') throw new Error('socket refused');
    opened.push(result.ws);
    const reply = new Promise<unknown>((resolve) => result.ws.once('message', (data) => resolve(JSON.parse(String(data)))));
    result.ws.send('{not json');
    expect(await reply).toMatchObject({ kind: 'error', id: 0, code: 'internal' });
    expect(result.ws.readyState).toBe(WebSocket.OPEN);
  });

  it('serves the renderer with the CSP that allows exactly this socket', async () => {
    const page = await get(server.port, '/');
    expect(page.status).toBe(200);
    expect(page.body).toContain('<title>Counterweight</title>');
    const csp = String(page.headers['content-security-policy']);
    expect(csp).toContain(`connect-src 'self' ${server.socketUrl}`);
    expect(csp).toContain("script-src 'self' 'wasm-unsafe-eval'");
    expect(page.headers['referrer-policy']).toBe('no-referrer');
  });

  it('serves demo logs by plain file name at /sample-data/, and nothing else from that folder', async () => {
    const demo = await get(server.port, '/sample-data/maple-row-tiny.csv');
    expect(demo.status).toBe(200);
    expect(demo.headers['content-type']).toBe('text/csv; charset=utf-8');
    expect(demo.body).toBe('decision_id,promotion\nd1,bakery\n');
    expect((await get(server.port, '/sample-data/..%2fpackage.json')).status).toBe(404);
    expect((await get(server.port, '/sample-data/.hidden.csv')).status).toBe(404);
  });

  it('refuses other Host headers (DNS rebinding) and paths outside the build', async () => {
    expect((await get(server.port, '/', `evil.example:${server.port}`)).status).toBe(403);
    expect((await get(server.port, '/../package.json')).status).toBe(404);
    expect((await get(server.port, '/%2e%2e/%2e%2e/etc/passwd')).status).toBe(404);
  });
});

describe('standalone web server', () => {
  it('serves no engine socket at all', async () => {
    const token = newToken();
    const server = await createHostedServer({ port: 0, token, engine: false });
    try {
      expect((await handshake(`${server.socketUrl}?token=${token}`, server.origin)).outcome).toBe(404);
      expect(new URL(server.url).search).toBe('');
    } finally {
      await server.close();
    }
  });
});
