/**
 * The engine host's request handling, independent of what carries the messages. Cancel and ping are
 * answered at once; register and query run on the engine in arrival order (the engine serialises them).
 */
import { toEngineError } from '../errors.ts';
import type { NativeEngine } from '../native.ts';
import { EngineError } from '../types.ts';
import { encodeTable, parseHostMessage, PROTOCOL_VERSION, ProtocolError } from './protocol.ts';
import type { HostReply, HostRequest } from './protocol.ts';
import type { Transport } from './transport.ts';

export interface ServeOptions {
  /** How often a running query reports progress, in milliseconds. */
  progressIntervalMs?: number;
  /** Called once the engine has been closed on request. */
  onClosed?: () => void;
}

export function serveEngine(transport: Transport, engine: NativeEngine, options: ServeOptions = {}): void {
  const interval = options.progressIntervalMs ?? 250;
  const reply = (message: HostReply): void => transport.send(message);
  const replyError = (id: number, error: unknown): void => {
    const e = error instanceof ProtocolError ? new EngineError('internal', error.message) : toEngineError(error);
    reply({ kind: 'error', id, code: e.code, message: e.message });
  };

  async function handle(request: HostRequest): Promise<void> {
    switch (request.kind) {
      case 'ping':
        reply({ kind: 'pong', id: request.id, protocol: PROTOCOL_VERSION });
        return;
      case 'cancel':
        await engine.cancel();
        reply({ kind: 'done', id: request.id });
        return;
      case 'register':
        reply({ kind: 'registered', id: request.id, source: await engine.register(request.source) });
        return;
      case 'query': {
        reply({ kind: 'progress', id: request.id, stage: 'started' });
        const timer = setInterval(() => {
          const p = engine.progress();
          if (p.percentage >= 0) reply({ kind: 'progress', id: request.id, stage: 'scanning', rowsScanned: p.rowsProcessed });
        }, interval);
        try {
          const table = await engine.query(request.sql);
          reply({ kind: 'progress', id: request.id, stage: 'finished' });
          reply({ kind: 'result', id: request.id, table: encodeTable(table), sourceScans: engine.sourceScans });
        } finally {
          clearInterval(timer);
        }
        return;
      }
      case 'close':
        await engine.close();
        reply({ kind: 'done', id: request.id });
        options.onClosed?.();
        return;
    }
  }

  transport.onMessage((raw) => {
    let request: HostRequest;
    try {
      const message = parseHostMessage(raw);
      if (message.kind !== 'register' && message.kind !== 'query' && message.kind !== 'cancel' && message.kind !== 'close' && message.kind !== 'ping') {
        throw new ProtocolError(`Malformed engine host message: the host accepts requests only, not "${message.kind}".`);
      }
      request = message;
    } catch (error) {
      const id = typeof raw === 'object' && raw !== null && Number.isSafeInteger((raw as { id?: unknown }).id) ? (raw as { id: number }).id : 0;
      replyError(id, error);
      return;
    }
    handle(request).catch((error: unknown) => replyError(request.id, error));
  });
}
