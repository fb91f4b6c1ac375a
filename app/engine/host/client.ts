/** Engine on the client side of the host protocol (no Node imports: the browser uses it too). */
import type { Table } from '../../core/table.ts';
import { EngineError } from '../types.ts';
import type { Engine, QueryOptions, RegisteredSource, SourceSpec } from '../types.ts';
import { decodeTable, parseHostMessage } from './protocol.ts';
import type { HostReply, HostRequest } from './protocol.ts';
import type { Transport } from './transport.ts';

type Pending = { resolve: (reply: HostReply) => void; reject: (error: EngineError) => void };

/** Distributive Omit, so each request variant keeps its own fields. */
type RequestBody = HostRequest extends infer R ? (R extends HostRequest ? Omit<R, 'id'> : never) : never;

export interface HostEngine extends Engine {
  readonly kind: 'host';
  /** Round trip to the host; resolves with the protocol version it speaks. */
  ping(): Promise<number>;
}

export function createHostEngine(transport: Transport, options: { onClosed?: () => Promise<void> } = {}): HostEngine {
  const pending = new Map<number, Pending>();
  let nextId = 1;
  let scans = 0;
  let gone: EngineError | null = null;

  transport.onMessage((raw) => {
    let reply: HostReply;
    try {
      const message = parseHostMessage(raw);
      if (message.kind === 'register' || message.kind === 'query' || message.kind === 'cancel' || message.kind === 'close' || message.kind === 'ping') return;
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
    const waiting = pending.get(reply.id);
    if (!waiting) return;
    pending.delete(reply.id);
    if (reply.kind === 'error') waiting.reject(new EngineError(reply.code, reply.message));
    else waiting.resolve(reply);
  });
  transport.onClose?.((reason) => {
    gone = new EngineError('closed', `The engine host stopped (${reason}).`);
    for (const p of pending.values()) p.reject(gone);
    pending.clear();
  });

  function request(body: RequestBody): Promise<HostReply> {
    if (gone) return Promise.reject(gone);
    const id = nextId++;
    return new Promise<HostReply>((resolve, reject) => {
      pending.set(id, { resolve, reject });
      transport.send({ ...body, id } as HostRequest);
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
    async close() {
      if (!gone) await request({ kind: 'close' }).catch(() => undefined);
      await options.onClosed?.();
    },
  };
}
