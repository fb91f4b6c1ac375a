import { createServer, type IncomingMessage, type Server } from 'node:http';
import type { Duplex } from 'node:stream';
import { WebSocketServer } from 'ws';
import type { Transport } from '../../app/engine/host/transport.ts';
import { contentSecurityPolicy } from '../../app/main/security.ts';
import { checkUpgrade, ENGINE_PATH, hostedUrl, LOOPBACK, loopbackHosts } from './access.ts';
import { engineSession } from './engine-session.ts';
import { socketTransport } from './socket-transport.ts';
import { pageHeaders, serveStatic } from './static-files.ts';

export interface Session {
  /** The engine process serving this socket, when it runs in one. */
  readonly pid?: number | undefined;
  close(): Promise<void>;
}

/** One engine per socket; the session ends when the socket closes. */
export type OpenSession = (transport: Transport, closeSocket: (reason: string) => void) => Promise<Session>;

export interface HostedServerOptions {
  /** 0 picks a free port. */
  port: number;
  /** Per-launch secret the socket requires (query parameter `token`; the page reads it from its URL fragment). */
  token: string;
  /** The page origin allowed to open the socket; defaults to this server's own origin. */
  origin?: string;
  /** The built renderer; without it only the socket is served. */
  staticRoot?: string;
  /** Folder of the demo logs served at /sample-data/. */
  demoFolder?: string;
  /** Whether to carry the engine host protocol at /engine; off serves the renderer alone. */
  engine?: boolean;
  /** Folders where a picked or dropped file's bare name is looked up (the page cannot send a path; only bare names are accepted). */
  logFolders?: readonly string[];
  openSession?: OpenSession;
}

export interface HostedServer {
  readonly port: number;
  readonly origin: string;
  /** The page address with the socket and token in it (or just the page when standalone). */
  readonly url: string;
  readonly socketUrl: string;
  /** Process ids of the engines serving the open sockets, one per socket. */
  enginePids(): number[];
  close(): Promise<void>;
}

/** A request is small (a target table is at most 5 MB); anything bigger is not a protocol request. */
const MAX_MESSAGE_BYTES = 16 * 1024 * 1024;

/**
 * Web mode's server on 127.0.0.1: the built renderer, and (when `engine` is on) the engine host protocol
 * over a WebSocket that only the served page, holding this launch's token, may open.
 */
export async function createHostedServer(options: HostedServerOptions): Promise<HostedServer> {
  const server = createServer();
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(options.port, LOOPBACK, () => {
      server.off('error', reject);
      resolve();
    });
  });
  const address = server.address();
  const port = typeof address === 'object' && address !== null ? address.port : options.port;
  const origin = options.origin ?? `http://${LOOPBACK}:${port}`;
  const socketUrl = `ws://${LOOPBACK}:${port}${ENGINE_PATH}`;
  const hosts = loopbackHosts(port);
  const engineOn = options.engine ?? true;
  const headers = pageHeaders(contentSecurityPolicy({ connect: engineOn ? [socketUrl] : [] }));

  server.on('request', (request, response) => {
    if (!hosts.includes((request.headers.host ?? '').toLowerCase())) {
      response.writeHead(403, { 'Content-Type': 'text/plain; charset=utf-8' }).end('Unexpected Host header.');
      return;
    }
    if (options.staticRoot === undefined) {
      response.writeHead(404, headers).end();
      return;
    }
    serveStatic(options.staticRoot, request, response, headers, options.demoFolder).catch(() => {
      if (!response.headersSent) response.writeHead(500, headers);
      response.end();
    });
  });

  const sockets = new WebSocketServer({ noServer: true, maxPayload: MAX_MESSAGE_BYTES });
  const sessions = new Set<Promise<Session>>();
  const opened = new Set<Session>();
  const openSession = options.openSession ?? engineSession(options.logFolders ?? []);
  server.on('upgrade', (request: IncomingMessage, socket: Duplex, head: Buffer) => {
    const decision = engineOn
      ? checkUpgrade({ url: request.url, origin: request.headers.origin, host: request.headers.host }, { token: options.token, origin, hosts })
      : ({ ok: false, status: 404, reason: 'no engine in standalone mode' } as const);
    if (!decision.ok) {
      socket.end(`HTTP/1.1 ${decision.status} ${decision.reason}\r\nConnection: close\r\nContent-Length: 0\r\n\r\n`);
      return;
    }
    sockets.handleUpgrade(request, socket, head, (ws) => {
      const session = openSession(socketTransport(ws), (reason) => ws.close(1011, reason.slice(0, 120)));
      sessions.add(session);
      session.then((s) => opened.add(s), (error: unknown) => ws.close(1011, String(error instanceof Error ? error.message : error).slice(0, 120)));
      ws.once('close', () => {
        sessions.delete(session);
        void session.then((s) => { opened.delete(s); return s.close(); }).catch(() => undefined);
      });
    });
  });

  return {
    port,
    origin,
    url: engineOn ? hostedUrl(port, options.token) : `http://${LOOPBACK}:${port}/`,
    socketUrl,
    enginePids: () => [...opened].flatMap((s) => (s.pid === undefined ? [] : [s.pid])),
    async close() {
      for (const ws of sockets.clients) ws.terminate();
      await Promise.all([...sessions].map((s) => s.then((x) => x.close()).catch(() => undefined)));
      sockets.close();
      await closeServer(server);
    },
  };
}

function closeServer(server: Server): Promise<void> {
  return new Promise((resolve) => {
    server.close(() => resolve());
    server.closeAllConnections();
  });
}
