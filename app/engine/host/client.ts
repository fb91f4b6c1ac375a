/**
 * The client side of the host protocol (no Node imports: the browser uses it too). It asks for named
 * things only (messages.ts); there is no way to send the host a statement.
 */
import type { AuditStage, ProgressPoint } from '../../core/progress.ts';
import type { InputFile, Report } from '../../core/model/report.ts';
import type { DrillRoles, DrillSelection, PageRequest } from '../../core/scan/drill.ts';
import type { Profile } from '../../core/scan/profile.ts';
import type { RoleEvidence } from '../../core/roles/evidence.ts';
import type { Table } from '../../core/table.ts';
import { parseReport } from '../../report/validate.ts';
import { EngineError } from '../types.ts';
import type { RegisteredSource } from '../types.ts';
import { decodeCell, decodeProfile, decodeReport, decodeTable, encodeCell } from './codec.ts';
import { PROTOCOL_VERSION, type HostReply, type HostRequest, type WireAuditRequest, type WireDrillSelection, type WirePathSource } from './messages.ts';
import { parseHostReply } from './replies.ts';
import type { Transport } from './transport.ts';

type Pending = { resolve: (reply: HostReply) => void; reject: (error: EngineError) => void };

/** Distributive Omit, so each request variant keeps its own fields. */
type RequestBody = HostRequest extends infer R ? (R extends HostRequest ? Omit<R, 'id'> : never) : never;

export interface HostAuditResult {
  readonly report: Report;
  /** The audit's cube as Arrow IPC (app/engine/cube-arrow.ts). */
  readonly cubeIpc: Uint8Array;
}

/** A stage starts or ends; `point` says where the audit is in the log's terms (app/core/progress.ts). */
export type AuditProgress = { readonly stage: AuditStage; readonly done?: boolean; readonly point?: ProgressPoint };

/** What a page asks the host to audit: a source it registered, and the user's choices. */
export type HostAuditRequest = WireAuditRequest;

export interface HostRegistration {
  readonly source: RegisteredSource;
  /** Size, time and SHA-256 of each file behind the source, as the report records them. */
  readonly inputs: readonly InputFile[];
}

/**
 * Rows behind a segment-map cell, or behind a finding of the host's latest audit of the source (by its
 * position among that report's findings with rows, codec.ts findingsWithRows).
 */
export interface HostDrill {
  readonly source: string;
  readonly roles: DrillRoles;
  readonly selection: Omit<DrillSelection, 'where'> & { readonly finding?: number };
}

export interface HostEngine {
  readonly kind: 'host';
  /** Round trip to the host; resolves with the protocol version it speaks. */
  ping(): Promise<number>;
  /** Pings and refuses a host that speaks another protocol version. */
  connect(): Promise<void>;
  register(source: WirePathSource): Promise<HostRegistration>;
  profile(relation: string): Promise<Profile>;
  /** The same request: the profile and the role evidence the host read with it. */
  inspect(relation: string): Promise<{ profile: Profile; evidence?: RoleEvidence }>;
  /** The whole audit in one request: the host runs it next to the log and sends the report and the cube. */
  audit(request: HostAuditRequest, onProgress?: (p: AuditProgress) => void, signal?: AbortSignal): Promise<HostAuditResult>;
  drillPage(drill: HostDrill, page: PageRequest, signal?: AbortSignal): Promise<Table>;
  drillCount(drill: HostDrill, signal?: AbortSignal): Promise<number>;
  /** Interrupts the running query, if any. */
  cancel(): Promise<void>;
  close(): Promise<void>;
}

export function createHostEngine(transport: Transport, options: { onClosed?: () => Promise<void> } = {}): HostEngine {
  const pending = new Map<number, Pending>();
  const progressListeners = new Map<number, (p: AuditProgress) => void>();
  let nextId = 1;
  let gone: EngineError | null = null;

  transport.onMessage((raw) => {
    let reply: HostReply;
    try {
      reply = parseHostReply(raw);
    } catch (error) {
      const id = (raw as { id?: unknown } | null)?.id;
      const waiting = typeof id === 'number' ? pending.get(id) : undefined;
      if (waiting) {
        pending.delete(id as number);
        waiting.reject(new EngineError('internal', (error as Error).message));
      }
      return;
    }
    if (reply.kind === 'audit-progress') {
      progressListeners.get(reply.id)?.({ stage: reply.stage, ...(reply.done ? { done: true } : {}), ...(reply.point ? { point: reply.point } : {}) });
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

  /** A request that a signal can interrupt (the host interrupts its running query). */
  async function interruptible(body: RequestBody, signal: AbortSignal | undefined): Promise<HostReply> {
    if (signal?.aborted) throw new EngineError('cancelled', 'The query was cancelled.');
    const onAbort = (): void => { void request({ kind: 'cancel' }).catch(() => undefined); };
    signal?.addEventListener('abort', onAbort, { once: true });
    try {
      return await request(body);
    } finally {
      signal?.removeEventListener('abort', onAbort);
    }
  }

  const wireDrill = (drill: HostDrill) => ({
    source: drill.source,
    roles: { time: drill.roles.time, decision_id: drill.roles.decision_id, action: drill.roles.action },
    // Fields that are undefined are left out, so every carrier sends the same message.
    selection: JSON.parse(JSON.stringify(drill.selection)) as WireDrillSelection,
  });

  const engine: HostEngine = {
    kind: 'host',
    async ping() {
      return expect(await request({ kind: 'ping' }), 'pong').protocol;
    },
    async connect() {
      const protocol = await engine.ping();
      if (protocol !== PROTOCOL_VERSION) {
        throw new EngineError('closed', `The engine speaks protocol version ${protocol} and this page version ${PROTOCOL_VERSION}; restart the engine and reload the page so both come from the same build.`);
      }
    },
    async register(source) {
      const reply = expect(await request({ kind: 'register', source }), 'registered');
      return { source: reply.source, inputs: reply.inputs };
    },
    async profile(relation) {
      return decodeProfile(expect(await request({ kind: 'profile', source: relation }), 'profiled').profile);
    },
    async inspect(relation) {
      const reply = expect(await request({ kind: 'profile', source: relation }), 'profiled');
      return { profile: decodeProfile(reply.profile), ...(reply.evidence === undefined ? {} : { evidence: decodeCell(reply.evidence) as unknown as RoleEvidence }) };
    },
    async audit(auditRequest, onProgress, signal) {
      if (signal?.aborted) throw new EngineError('cancelled', 'The audit was cancelled.');
      let auditId: number | null = null;
      const onAbort = (): void => {
        if (auditId !== null) void request({ kind: 'cancel', target: auditId }).catch(() => undefined);
      };
      signal?.addEventListener('abort', onAbort, { once: true });
      // Fields that are undefined are left out, so every carrier sends the same message.
      const wire = JSON.parse(JSON.stringify(auditRequest)) as WireAuditRequest;
      try {
        const reply = expect(await request({ kind: 'audit', request: wire }, (id) => {
          auditId = id;
          if (onProgress) progressListeners.set(id, onProgress);
        }), 'audit-result');
        return { report: parseReport(decodeReport(reply.report), 'the engine host\'s report'), cubeIpc: reply.cube };
      } finally {
        if (auditId !== null) progressListeners.delete(auditId);
        signal?.removeEventListener('abort', onAbort);
      }
    },
    async drillPage(drill, page, signal) {
      const after = page.after ? { key: page.after.key.map(encodeCell), types: [...page.after.types], tied: page.after.tied } : null;
      const reply = await interruptible({ kind: 'drill-page', ...wireDrill(drill), page: { offset: page.offset, limit: page.limit, after } }, signal);
      return decodeTable(expect(reply, 'rows').table);
    },
    async drillCount(drill, signal) {
      return expect(await interruptible({ kind: 'drill-count', ...wireDrill(drill) }, signal), 'count').rows;
    },
    async cancel() {
      if (gone) return;
      await request({ kind: 'cancel' });
    },
    async close() {
      if (!gone) await request({ kind: 'close' }).catch(() => undefined);
      await options.onClosed?.();
    },
  };
  return engine;
}
