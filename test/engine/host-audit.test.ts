/**
 * The whole audit as one host request: the server runs app/core's audit over its native engine and sends
 * the report and the cube; the client decodes both. The reference is the same audit run in-process on
 * another native engine (one thread each, so DOUBLE sums add up in the same order).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAuditDetailed, type AuditResult } from '../../app/core/audit.ts';
import { cubeFromArrowIpc } from '../../app/engine/cube-arrow.ts';
import { createHostEngine, type AuditProgress, type HostEngine } from '../../app/engine/host/client.ts';
import type { HostMessage, HostRequest } from '../../app/engine/host/protocol.ts';
import { serveEngine } from '../../app/engine/host/server.ts';
import type { Transport } from '../../app/engine/host/transport.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';
import type { RegisteredSource } from '../../app/engine/types.ts';
import { FIXED_NOW, firstDifference, SAMPLE, v9Target } from '../core/audit-helpers.ts';

const DEMO = `${SAMPLE}maple-row-demo.parquet`;

/** Two ends of a channel carrying JSON text, delivered on a later turn as a socket or process would. */
function channel(): { server: Transport; client: Transport; sent: HostRequest[]; toClient: HostMessage[] } {
  const listeners: { server?: (m: unknown) => void; client?: (m: unknown) => void } = {};
  const sent: HostRequest[] = [];
  const toClient: HostMessage[] = [];
  const carry = (to: 'server' | 'client', message: HostMessage) => {
    const text = JSON.stringify(message);
    setImmediate(() => listeners[to]?.(JSON.parse(text)));
  };
  return {
    server: { send: (m) => { toClient.push(m); carry('client', m); }, onMessage: (l) => { listeners.server = l; } },
    client: { send: (m) => { sent.push(m as HostRequest); carry('server', m); }, onMessage: (l) => { listeners.client = l; } },
    sent,
    toClient,
  };
}

let hostEngine: NativeEngine;
let client: HostEngine;
let wire: ReturnType<typeof channel>;
let source: RegisteredSource;
let reference: AuditResult;

beforeAll(async () => {
  wire = channel();
  hostEngine = await createNativeEngine({ threads: 1 });
  serveEngine(wire.server, hostEngine);
  client = createHostEngine(wire.client);
  source = await client.register({ kind: 'path', paths: [DEMO] });
  const local = await createNativeEngine({ threads: 1 });
  try {
    const src = await local.register({ kind: 'path', paths: [DEMO] });
    reference = await runAuditDetailed((q) => local.query(q), { relation: src.relation, input: { files: [], format: src.format }, engine: 'host', targets: [v9Target()], now: FIXED_NOW });
  } finally {
    await local.close();
  }
});
afterAll(async () => {
  await client?.close();
  await hostEngine?.close();
});

describe('the audit request', () => {
  it('sends one request and gets back the report and the cube of the in-process audit', async () => {
    const before = wire.sent.length;
    const progress: AuditProgress[] = [];
    const started = performance.now();
    const { report, cubeIpc } = await client.audit({ relation: source.relation, input: { files: [], format: source.format }, targets: [v9Target()], engine: 'host' }, (p) => progress.push(p));
    const ms = performance.now() - started;
    expect(wire.sent.slice(before).map((m) => m.kind)).toEqual(['audit']);
    expect(progress).toEqual((['profile', 'cube', 'tails', 'checks'] as const).flatMap((stage) => [{ stage }, { stage, done: true }]));
    const { run: _run, ...got } = report;
    const { run: _ref, ...want } = reference.report;
    expect(firstDifference(got, want, 0)).toBeNull();
    expect(report.run.engine).toBe('host');
    expect(cubeFromArrowIpc(cubeIpc)).toStrictEqual(reference.cells);
    const result = wire.toClient.find((m) => m.kind === 'audit-result');
    console.log(`audit request round trip on the demo log: ${Math.round(ms)} ms; cube ${cubeIpc.byteLength} bytes of Arrow IPC, ${result && result.kind === 'audit-result' ? result.cube.length : 0} characters of base64`);
  });

  it('is stopped by a cancel naming it, and the host stays usable', async () => {
    const controller = new AbortController();
    const before = wire.sent.length;
    const pending = client.audit({ relation: source.relation, input: { files: [], format: source.format }, engine: 'host' }, (p) => {
      if (p.stage === 'cube' && !p.done) controller.abort();
    }, controller.signal);
    await expect(pending).rejects.toMatchObject({ code: 'cancelled', message: 'The audit was cancelled.' });
    const sent = wire.sent.slice(before);
    expect(sent.map((m) => m.kind)).toEqual(['audit', 'cancel']);
    expect(sent[1]).toMatchObject({ kind: 'cancel', target: sent[0]?.id });
    expect(wire.toClient.some((m) => m.kind === 'audit-result' && m.id === sent[0]?.id)).toBe(false);
    expect(await client.ping()).toBe(1);
  });

  it('passes the core\'s own error for a role naming no column', async () => {
    await expect(client.audit({ relation: source.relation, input: { files: [], format: source.format }, roles: { action: 'nope' }, engine: 'host' })).rejects.toThrow(/column "nope" does not exist/);
  });

  it('answers a malformed audit request with the reason', async () => {
    const replies: unknown[] = [];
    let deliver: (m: unknown) => void = () => undefined;
    const engine = await createNativeEngine({ threads: 1 });
    try {
      serveEngine({ send: (m) => { replies.push(m); }, onMessage: (l) => { deliver = l; } }, engine);
      deliver({ kind: 'audit', id: 9, request: { relation: 1 } });
      deliver({ kind: 'audit-result', id: 10, report: {}, cube: '' });
      while (replies.length < 2) await new Promise((r) => setTimeout(r, 5));
      expect(replies).toContainEqual({ kind: 'error', id: 9, code: 'internal', message: 'Malformed engine host message: "request.relation" must be a relation name.' });
      expect(replies).toContainEqual(expect.objectContaining({ kind: 'error', id: 10, code: 'internal' }));
    } finally {
      await engine.close();
    }
  });
});
