/**
 * The engine host's request handling, independent of what carries the messages. Cancel and ping are
 * answered at once; register, query and the queries of an audit run on the engine in arrival order
 * (the engine serialises them). An audit runs app/core's audit here, next to the log, and sends back
 * the report and the cube (DEVELOPERS.md, "The desktop data path").
 */
import { AuditCancelled, runAuditDetailed } from '../../core/audit.ts';
import { cubeToArrowIpc } from '../cube-arrow.ts';
import { toEngineError } from '../errors.ts';
import type { NativeEngine } from '../native.ts';
import { EngineError } from '../types.ts';
import { toBase64 } from './base64.ts';
import { encodeReport, encodeTable, isRequest, parseHostMessage, PROTOCOL_VERSION, ProtocolError } from './protocol.ts';
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

  /** Running audits by request id; a cancel naming one sets its flag, which the audit checks between stages. */
  const audits = new Map<number, { aborted: boolean }>();

  async function audit(request: Extract<HostRequest, { kind: 'audit' }>): Promise<void> {
    const { id } = request;
    const signal = { aborted: false };
    audits.set(id, signal);
    try {
      const { report, cells } = await runAuditDetailed((sql) => engine.query(sql), {
        ...request.request,
        onProgress: (p) => reply({ kind: 'audit-progress', id, stage: p.stage, ...(p.done ? { done: true as const } : {}) }),
        signal,
      });
      if (signal.aborted) throw new AuditCancelled();
      reply({ kind: 'audit-result', id, report: encodeReport(report), cube: toBase64(cubeToArrowIpc(cells)) });
    } catch (error) {
      if (signal.aborted || error instanceof AuditCancelled) throw new EngineError('cancelled', 'The audit was cancelled.');
      // The core's own errors (a role that names no column, a malformed target table) keep their words.
      throw error instanceof EngineError ? error : new EngineError('internal', error instanceof Error ? error.message : String(error));
    } finally {
      audits.delete(id);
    }
  }

  async function handle(request: HostRequest): Promise<void> {
    switch (request.kind) {
      case 'ping':
        reply({ kind: 'pong', id: request.id, protocol: PROTOCOL_VERSION });
        return;
      case 'cancel': {
        const target = request.target === undefined ? undefined : audits.get(request.target);
        if (target) target.aborted = true;
        await engine.cancel();
        reply({ kind: 'done', id: request.id });
        return;
      }
      case 'audit':
        await audit(request);
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
      if (!isRequest(message)) {
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
