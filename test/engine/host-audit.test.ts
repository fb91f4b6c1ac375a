/**
 * The whole audit as one host request: the server runs app/core's audit over its native engine and sends
 * the report and the cube; the client decodes both. The reference is the same audit run in-process on
 * another native engine (one thread each, so DOUBLE sums add up in the same order).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAuditDetailed, type AuditResult } from '../../app/core/audit.ts';
import { cubeFromArrowIpc } from '../../app/engine/cube-arrow.ts';
import { createHostEngine, type AuditProgress, type HostEngine } from '../../app/engine/host/client.ts';
import type { HostMessage, HostRequest } from '../../app/engine/host/messages.ts';
import { serveEngine } from '../../app/engine/host/server.ts';
import type { Transport } from '../../app/engine/host/transport.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';
import type { HostRegistration } from '../../app/engine/host/client.ts';
import { FIXED_NOW, firstDifference, SAMPLE, v9Target } from '../core/audit-helpers.ts';

const DEMO = `${SAMPLE}maple-row-demo.parquet`;

/** Two ends of a channel carrying structured clones (as a process's IPC channel does), delivered on a later turn. */
function channel(): { server: Transport; client: Transport; sent: HostRequest[]; toClient: HostMessage[] } {
  const listeners: { server?: (m: unknown) => void; client?: (m: unknown) => void } = {};
  const sent: HostRequest[] = [];
  const toClient: HostMessage[] = [];
  const carry = (to: 'server' | 'client', message: HostMessage) => {
    const copy = structuredClone(message);
    setImmediate(() => listeners[to]?.(copy));
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
let registration: HostRegistration;
let relation: string;
let reference: AuditResult;

beforeAll(async () => {
  wire = channel();
  hostEngine = await createNativeEngine({ threads: 1 });
  serveEngine(wire.server, hostEngine);
  client = createHostEngine(wire.client);
  registration = await client.register({ kind: 'path', paths: [DEMO] });
  relation = registration.source.relation;
  const local = await createNativeEngine({ threads: 1 });
  try {
    const src = await local.register({ kind: 'path', paths: [DEMO] });
    reference = await runAuditDetailed((q) => local.query(q), { relation: src.relation, input: { files: [...registration.inputs], format: src.format }, scanSql: src.scanSql, engine: 'host', targets: [v9Target()], now: FIXED_NOW });
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
    const { report, cubeIpc } = await client.audit({ source: relation, targets: [v9Target()] }, (p) => progress.push(p));
    const ms = performance.now() - started;
    expect(wire.sent.slice(before).map((m) => m.kind)).toEqual(['audit']);
    // each stage starts and ends once, in order; ticks between (every 250 ms) repeat the running stage, and every
    // message carries where the audit is (app/core/progress.ts), its share of the audit never going back
    const stages = ['profile', 'cube', 'tails', 'checks'] as const;
    expect(stages.map((st) => progress.filter((p) => p.stage === st && p.done).length)).toEqual([1, 1, 1, 1]);
    expect(progress.map((p) => p.stage).filter((st, i, all) => i === 0 || all[i - 1] !== st)).toEqual([...stages]);
    stages.forEach((st, i) => {
      const start = progress.findIndex((p) => p.stage === st && !p.done);
      const end = progress.findIndex((p) => p.stage === st && p.done);
      expect(start).toBeGreaterThanOrEqual(0);
      expect(end).toBeGreaterThan(start);
      const next = stages[i + 1];
      if (next) expect(progress.findIndex((p) => p.stage === next)).toBeGreaterThan(end);
    });
    const shares = progress.map((p) => p.point?.share ?? NaN);
    expect(shares.every((x, i) => Number.isFinite(x) && (i === 0 || x >= (shares[i - 1] as number)))).toBe(true);
    const { run: _run, ...got } = report;
    const { run: _ref, ...want } = reference.report;
    expect(firstDifference(got, want, 0)).toBeNull();
    expect(report.run.engine).toBe('host');
    expect(cubeFromArrowIpc(cubeIpc)).toStrictEqual(reference.cells);
    expect(cubeIpc).toBeInstanceOf(Uint8Array);
    console.log(`audit request round trip on the demo log: ${Math.round(ms)} ms; cube ${cubeIpc.byteLength} bytes of Arrow IPC, carried as bytes`);
  });

  it('is stopped by a cancel naming it, and the host stays usable', async () => {
    const controller = new AbortController();
    const before = wire.sent.length;
    const pending = client.audit({ source: relation }, (p) => {
      if (p.stage === 'cube' && !p.done) controller.abort();
    }, controller.signal);
    await expect(pending).rejects.toMatchObject({ code: 'cancelled', message: 'The audit was cancelled.' });
    const sent = wire.sent.slice(before);
    expect(sent.map((m) => m.kind)).toEqual(['audit', 'cancel']);
    expect(sent[1]).toMatchObject({ kind: 'cancel', target: sent[0]?.id });
    expect(wire.toClient.some((m) => m.kind === 'audit-result' && m.id === sent[0]?.id)).toBe(false);
    expect(await client.ping()).toBe(2);
  });

  it('audits the same log as CSV (read through a copy that takes the audit\'s signal) to the same verdict, checks and targets', async () => {
    // The host once handed the CSV copy a plain { aborted } flag where an AbortSignal belongs, so every hosted CSV
    // audit failed with "signal?.addEventListener is not a function". The core's CancelSignal type now forbids it.
    const csv = await client.register({ kind: 'path', paths: [DEMO.replace(/\.parquet$/, '.csv')] });
    const controller = new AbortController();
    const cancelled = client.audit({ source: csv.source.relation, targets: [v9Target()] }, (p) => {
      if (p.stage === 'cube' && !p.done) controller.abort();
    }, controller.signal);
    await expect(cancelled).rejects.toMatchObject({ code: 'cancelled' });
    const { report } = await client.audit({ source: csv.source.relation, targets: [v9Target()] });
    expect(report.input.format).toBe('csv');
    expect(report.verdict).toStrictEqual(reference.report.verdict);
    expect(report.checks.map((c) => [c.id, c.status])).toStrictEqual(reference.report.checks.map((c) => [c.id, c.status]));
    expect(report.targets).toStrictEqual(reference.report.targets);
  });

  it('passes the core\'s own error for a role naming no column', async () => {
    await expect(client.audit({ source: relation, roles: { action: 'nope' } })).rejects.toThrow(/column "nope" does not exist/);
  });

  it('answers a malformed audit request with the reason', async () => {
    const replies: unknown[] = [];
    let deliver: (m: unknown) => void = () => undefined;
    const engine = await createNativeEngine({ threads: 1 });
    try {
      serveEngine({ send: (m) => { replies.push(m); }, onMessage: (l) => { deliver = l; } }, engine);
      deliver({ kind: 'audit', id: 9, request: { source: 1 } });
      deliver({ kind: 'audit-result', id: 10, report: {}, cube: '' });
      deliver({ kind: 'audit', id: 11, request: { source: '"src_1"; COPY (SELECT 1) TO \'/tmp/x\'' } });
      deliver({ kind: 'audit', id: 12, request: { source: '"src_77"' } });
      while (replies.length < 4) await new Promise((r) => setTimeout(r, 5));
      expect(replies).toContainEqual({ kind: 'error', id: 9, code: 'internal', message: expect.stringMatching(/^Malformed engine host request: "request.source" /) });
      expect(replies).toContainEqual({ kind: 'error', id: 10, code: 'internal', message: 'Malformed engine host message: the host accepts requests only, not "audit-result".' });
      expect(replies).toContainEqual({ kind: 'error', id: 11, code: 'internal', message: expect.stringMatching(/"request.source" must be a source the engine registered/) });
      expect(replies).toContainEqual({ kind: 'error', id: 12, code: 'sql', message: 'No log is registered as "src_77" on this engine; open the log again.' });
    } finally {
      await engine.close();
    }
  });
});
