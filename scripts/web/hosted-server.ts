import { createServer, type IncomingMessage, type Server } from 'node:http';
import type { Duplex } from 'node:stream';
import { WebSocketServer, type WebSocket } from 'ws';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { HostMessage } from '../../app/engine/host/protocol.ts';
import { serveEngine } from '../../app/engine/host/server.ts';
import type { Transport } from '../../app/engine/host/transport.ts';
import { contentSecurityPolicy } from '../../app/main/security.ts';
import { checkUpgrade, ENGINE_PATH, hostedUrl, LOOPBACK, loopbackHosts } from './access.ts';
import { withLogFolders } from './log-folders.ts';
import { pageHeaders, serveStatic } from './static-files.ts';

/** One engine per socket; the session ends when the socket closes. */
export type OpenSession = (transport: Transport) => Promise<{ close(): Promise<void> }>;

export interface HostedServerOptions {
  /** 0 picks a free port. */
  port: number;
  /** Per-launch secret the socket requires (query parameter `token`). */
  token: string;
  /** The page origin allowed to open the socket; defaults to this server's own origin. */
  origin?: string;
  /** The built renderer; without it only the socket is served. */
  staticRoot?: string;
  /** Folder of the demo logs served at /sample-data/. */
  demoFolder?: string;
  /** Whether to carry the engine host protocol at /engine; off serves the renderer alone. */
  engine?: boolean;
  /** Folders where a picked or dropped file's bare name is looked up (the page cannot send a path). */
  logFolders?: readonly string[];
  openSession?: OpenSession;
}

export interface HostedServer {
  readonly port: number;
  readonly origin: string;
  /** The page address with the socket and token in it (or just the page when standalone). */
  readonly url: string;
  readonly socketUrl: string;
  close(): Promise<void>;
}

/** A large cube page or result table; anything bigger is not a protocol request. */
const MAX_MESSAGE_BYTES = 64 * 1024 * 1024;

/** The native engine served over the host protocol, as in the desktop engine host. */
export function nativeSession(logFolders: readonly string[] = []): OpenSession {
  return async (transport) => {
    // As in the desktop engine host: queries may read only the logs registered through the protocol.
    const engine = await createNativeEngine({ restrictFileAccess: true });
    serveEngine(transport, withLogFolders(engine, logFolders));
    return { close: () => engine.close() };
  };
}

export const openNativeSession: OpenSession = nativeSession();

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
  const sessions = new Set<Promise<{ close(): Promise<void> }>>();
  const openSession = options.openSession ?? nativeSession(options.logFolders);
  server.on('upgrade', (request: IncomingMessage, socket: Duplex, head: Buffer) => {
    const decision = engineOn
      ? checkUpgrade({ url: request.url, origin: request.headers.origin, host: request.headers.host }, { token: options.token, origin, hosts })
      : ({ ok: false, status: 404, reason: 'no engine in standalone mode' } as const);
    if (!decision.ok) {
      socket.end(`HTTP/1.1 ${decision.status} ${decision.reason}\r\nConnection: close\r\nContent-Length: 0\r\n\r\n`);
      return;
    }
    sockets.handleUpgrade(request, socket, head, (ws) => {
      const session = openSession(socketTransport(ws));
      sessions.add(session);
      session.catch((error: unknown) => ws.close(1011, String(error instanceof Error ? error.message : error).slice(0, 120)));
      ws.once('close', () => {
        sessions.delete(session);
        void session.then((s) => s.close()).catch(() => undefined);
      });
    });
  });

  return {
    port,
    origin,
    url: engineOn ? hostedUrl(port, options.token) : `http://${LOOPBACK}:${port}/`,
    socketUrl,
    async close() {
      for (const ws of sockets.clients) ws.terminate();
      await Promise.all([...sessions].map((s) => s.then((x) => x.close()).catch(() => undefined)));
      sockets.close();
      await closeServer(server);
    },
  };
}

/**
 * The host protocol as JSON text frames (the protocol's messages are JSON-safe by design). Frames that
 * arrive before the engine is ready are held and delivered once it listens.
 */
export function socketTransport(ws: WebSocket): Transport {
  let listener: ((message: unknown) => void) | null = null;
  const held: unknown[] = [];
  ws.on('message', (data, isBinary) => {
    const message = isBinary ? { malformed: 'binary frame' } : parseFrame(String(data));
    if (listener) listener(message);
    else held.push(message);
  });
  return {
    send(message: HostMessage) {
      if (ws.readyState === ws.OPEN) ws.send(JSON.stringify(message));
    },
    onMessage(next) {
      listener = next;
      for (const message of held.splice(0)) next(message);
    },
    onClose(next) {
      ws.once('close', (code) => next(`socket closed (${code})`));
    },
  };
}

/** Not JSON becomes a value the protocol parser rejects with a clear error reply. */
function parseFrame(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return { malformed: 'not JSON' };
  }
}

function closeServer(server: Server): Promise<void> {
  return new Promise((resolve) => {
    server.close(() => resolve());
    server.closeAllConnections();
  });
}
