/** Engine on the client side of the host protocol (no Node imports: the browser uses it too). */
import type { AuditRequest, AuditStage } from '../../core/audit.ts';
import type { Report } from '../../core/model/report.ts';
import type { Table } from '../../core/table.ts';
import { parseReport } from '../../report/validate.ts';
import { EngineError } from '../types.ts';
import type { Engine, QueryOptions, RegisteredSource, SourceSpec } from '../types.ts';
import { decodeCube, decodeReport, decodeTable, isRequest, parseHostMessage } from './protocol.ts';
import type { HostReply, HostRequest, WireAuditRequest } from './protocol.ts';
import type { Transport } from './transport.ts';

type Pending = { resolve: (reply: HostReply) => void; reject: (error: EngineError) => void };

/** Distributive Omit, so each request variant keeps its own fields. */
type RequestBody = HostRequest extends infer R ? (R extends HostRequest ? Omit<R, 'id'> : never) : never;

export interface HostAuditResult {
  readonly report: Report;
  /** The audit's cube as Arrow IPC (app/engine/cube-arrow.ts). */
  readonly cubeIpc: Uint8Array;
}

export type AuditProgress = { readonly stage: AuditStage; readonly done?: boolean };

/** What the host needs of an AuditRequest: everything but the callbacks and the clock. */
export type HostAuditRequest = Omit<AuditRequest, 'onProgress' | 'signal' | 'now'>;

export interface HostEngine extends Engine {
  readonly kind: 'host';
  /** Round trip to the host; resolves with the protocol version it speaks. */
  ping(): Promise<number>;
  /** The whole audit in one request: the host runs it next to the log and sends the report and the cube. */
  audit(request: HostAuditRequest, onProgress?: (p: AuditProgress) => void, signal?: AbortSignal): Promise<HostAuditResult>;
}

/** The request as JSON would carry it: fields that are undefined are left out, so any carrier sends the same thing. */
function wireRequest(request: HostAuditRequest): WireAuditRequest {
  const { relation, input, scanSql, roles, targets, settings, engine } = request;
  return JSON.parse(JSON.stringify({ relation, input, scanSql, roles, targets, settings, engine })) as WireAuditRequest;
}

export function createHostEngine(transport: Transport, options: { onClosed?: () => Promise<void> } = {}): HostEngine {
  const pending = new Map<number, Pending>();
  const progressListeners = new Map<number, (p: AuditProgress) => void>();
  let nextId = 1;
  let scans = 0;
  let gone: EngineError | null = null;

  transport.onMessage((raw) => {
    let reply: HostReply;
    try {
      const message = parseHostMessage(raw);
      if (isRequest(message)) return;
      reply = message;
    } catch (error) {
      const id = (raw as { id?: unknown } | null)?.id;
      const waiting = typeof id === 'number' ? pending.get(id) : undefined;
      if (waiting) {
        pending.delete(id as number);
        waiting.reject(new EngineError('internal', (error as Error).message));
      }
      return;
    }
    if (reply.kind === 'progress') return;
    if (reply.kind === 'audit-progress') {
      progressListeners.get(reply.id)?.({ stage: reply.stage, ...(reply.done ? { done: true } : {}) });
      return;
    }
    const waiting = pending.get(reply.id);
    if (!waiting) return;
    pending.delete(reply.id);
    progressListeners.delete(reply.id);
    if (reply.kind === 'error') waiting.reject(new EngineError(reply.code, reply.message));
    else waiting.resolve(reply);
  });
  transport.onClose?.((reason) => {
    gone = new EngineError('closed', `The engine host stopped (${reason}).`);
    for (const p of pending.values()) p.reject(gone);
    pending.clear();
  });

  function request(body: RequestBody, onSent?: (id: number) => void): Promise<HostReply> {
    if (gone) return Promise.reject(gone);
    const id = nextId++;
    return new Promise<HostReply>((resolve, reject) => {
      pending.set(id, { resolve, reject });
      onSent?.(id);
      try {
        transport.send({ ...body, id } as HostRequest);
      } catch (error) {
        pending.delete(id);
        reject(error instanceof EngineError ? error : new EngineError('closed', (error as Error).message));
      }
    });
  }

  function expect<K extends HostReply['kind']>(reply: HostReply, kind: K): Extract<HostReply, { kind: K }> {
    if (reply.kind !== kind) throw new EngineError('internal', `The engine host answered "${reply.kind}" where "${kind}" was expected.`);
    return reply as Extract<HostReply, { kind: K }>;
  }

  return {
    kind: 'host',
    async register(source: SourceSpec): Promise<RegisteredSource> {
      if (source.kind !== 'path') throw new EngineError('unsupported-format', 'The engine host reads files by path; a browser File handle cannot be sent to it.');
      const { kind: _kind, paths, format, csv, hivePartitioning } = source;
      const wire = { kind: 'path' as const, paths, ...(format && { format }), ...(csv && { csv }), ...(hivePartitioning !== undefined && { hivePartitioning }) };
      return expect(await request({ kind: 'register', source: wire }), 'registered').source;
    },
    async query(sql: string, queryOptions: QueryOptions = {}): Promise<Table> {
      const { signal } = queryOptions;
      if (signal?.aborted) throw new EngineError('cancelled', 'The query was cancelled.');
      const onAbort = (): void => { void request({ kind: 'cancel' }).catch(() => undefined); };
      signal?.addEventListener('abort', onAbort, { once: true });
      try {
        const reply = expect(await request({ kind: 'query', sql }), 'result');
        scans = reply.sourceScans;
        return decodeTable(reply.table);
      } finally {
        signal?.removeEventListener('abort', onAbort);
      }
    },
    async cancel() {
      if (gone) return;
      await request({ kind: 'cancel' });
    },
    get sourceScans() { return scans; },
    async ping() {
      return expect(await request({ kind: 'ping' }), 'pong').protocol;
    },
    async audit(auditRequest, onProgress, signal) {
      if (signal?.aborted) throw new EngineError('cancelled', 'The audit was cancelled.');
      let auditId: number | null = null;
      const onAbort = (): void => {
        if (auditId !== null) void request({ kind: 'cancel', target: auditId }).catch(() => undefined);
      };
      signal?.addEventListener('abort', onAbort, { once: true });
      try {
        const reply = expect(await request({ kind: 'audit', request: wireRequest(auditRequest) }, (id) => {
          auditId = id;
          if (onProgress) progressListeners.set(id, onProgress);
        }), 'audit-result');
        return { report: parseReport(decodeReport(reply.report), 'the engine host\'s report'), cubeIpc: decodeCube(reply) };
      } catch (error) {
        throw error instanceof EngineError ? error : new EngineError('internal', (error as Error).message);
      } finally {
        if (auditId !== null) progressListeners.delete(auditId);
        signal?.removeEventListener('abort', onAbort);
      }
    },
    async close() {
      if (!gone) await request({ kind: 'close' }).catch(() => undefined);
      await options.onClosed?.();
    },
  };
}
