/**
 * The engine host's request handling, independent of what carries the messages. Every request is one of
 * the named kinds of messages.ts; the SQL each runs is built here from app/core's builders (profile,
 * audit, drill), over a source this host registered, on a locked engine (native.ts restrictFileAccess:
 * reads of registered files only, one SELECT per statement). Cancel and ping are answered at once; the
 * rest run on the engine in arrival order (the engine serialises them).
 */
import { AuditCancelled, inspectRoles, runAuditDetailed, type RoleInspection } from '../../core/audit.ts';
import type { InputFile } from '../../core/model/report.ts';
import { ProgressTracker, type AuditStage, type ProgressPoint } from '../../core/progress.ts';
import { drillCountSql, drillPageSql, parseDrillCount, type DrillSpec } from '../../core/scan/drill.ts';
import { describeSql, parseDescribe } from '../../core/scan/profile.ts';
import { cubeToArrowIpc } from '../cube-arrow.ts';
import { toEngineError } from '../errors.ts';
import { peakRssMb } from '../memory.ts';
import type { NativeEngine } from '../native.ts';
import { serialQueue } from '../serial.ts';
import { EngineError } from '../types.ts';
import type { RegisteredSource } from '../types.ts';
import { decodeCell, encodeProfile, encodeReport, encodeTable, encodeValue, findingsWithRows } from './codec.ts';
import { fingerprintFiles } from './fingerprint.ts';
import { MAX_REPLY_BYTES, PROTOCOL_VERSION, type HostReply, type HostRequest } from './messages.ts';
import { ProtocolError } from './protocol-error.ts';
import { idOf, parseHostRequest } from './requests.ts';
import type { Transport } from './transport.ts';

export interface ServeOptions {
  /** Called once the engine has been closed on request. */
  onClosed?: () => void;
  /** Byte cap of one reply (default MAX_REPLY_BYTES). */
  maxReplyBytes?: number;
}

interface Source {
  readonly registered: RegisteredSource;
  readonly inputs: InputFile[];
  columnTypes?: Record<string, string>;
  /** Predicates of the latest audit's findings with rows (codec.ts findingsWithRows). */
  findings: string[];
  /** The profile and role evidence made when the log was opened: the audit reuses them (a log is profiled once). */
  inspection?: RoleInspection;
}

type DrillRequest = Extract<HostRequest, { kind: 'drill-page' | 'drill-count' }>;

export function serveEngine(transport: Transport, engine: NativeEngine, options: ServeOptions = {}): void {
  const maxBytes = options.maxReplyBytes ?? MAX_REPLY_BYTES;
  const reply = (message: HostReply): void => transport.send(message);
  const replyError = (id: number, error: unknown): void => {
    const e = error instanceof ProtocolError ? new EngineError('internal', error.message) : toEngineError(error);
    reply({ kind: 'error', id, code: e.code, message: e.message });
  };
  const sources = new Map<string, Source>();
  const inOrder = serialQueue();
  /** Running audits by request id; a cancel naming one aborts it (the audit checks between stages, a CSV's copy is interrupted). */
  const audits = new Map<number, AbortController>();

  function sourceOf(relation: string): Source {
    const source = sources.get(relation);
    if (!source) throw new EngineError('sql', `No log is registered as ${relation} on this engine; open the log again.`);
    return source;
  }

  function capped(bytes: number, what: string): void {
    if (bytes > maxBytes) throw new EngineError('too-large', `The ${what} is ${(bytes / 2 ** 20).toFixed(1)} MB, more than the ${(maxBytes / 2 ** 20).toFixed(0)} MB one answer may hold; nothing was sent.`);
  }

  async function drillSpec(request: DrillRequest): Promise<DrillSpec> {
    const source = sourceOf(request.source);
    source.columnTypes ??= Object.fromEntries(parseDescribe(await engine.query(describeSql(request.source))).map((c) => [c.name, c.type]));
    const { finding, ...cell } = request.selection;
    let where: string | undefined;
    if (finding !== undefined) {
      where = source.findings[finding];
      if (where === undefined) throw new EngineError('sql', `The latest audit of this log has no finding number ${finding} with rows; run the audit again.`);
    }
    return { relation: request.source, roles: request.roles, selection: { ...cell, ...(where === undefined ? {} : { where, segment: {} }) }, columnTypes: source.columnTypes };
  }

  async function audit(request: Extract<HostRequest, { kind: 'audit' }>): Promise<void> {
    const { id } = request;
    const { source: relation, roles, targets, settings } = request.request;
    const source = sourceOf(relation);
    const controller = new AbortController();
    const { signal } = controller;
    audits.set(id, controller);
    // Where the audit is, in the log's terms (app/core/progress.ts): sent on every stage change and every quarter second.
    const tracker = new ProgressTracker(Date.now());
    let stage: AuditStage = 'profile';
    let last = '';
    const send = (point: ProgressPoint, done?: boolean): void => {
      const key = `${point.stageIndex} ${Math.floor(point.share * 100)} ${point.logShare === null ? '' : Math.floor(point.logShare * 100)} ${point.secondsLeft === null ? '' : Math.round(point.secondsLeft)} ${done ? 'done' : ''}`;
      if (key === last && !done) return;
      last = key;
      reply({ kind: 'audit-progress', id, stage, ...(done ? { done: true as const } : {}), point });
    };
    const ticker = setInterval(() => send(tracker.sample(engine.queryProgress?.() ?? null, Date.now())), 250);
    ticker.unref?.();
    try {
      const { report, cells } = await runAuditDetailed((sql) => engine.query(sql), {
        relation,
        input: { files: source.inputs, format: source.registered.format },
        scanSql: source.registered.scanSql,
        ...(roles ? { roles } : {}),
        ...(targets ? { targets } : {}),
        ...(settings ? { settings } : {}),
        ...(source.inspection ? { inspection: source.inspection } : {}),
        engine: 'host',
        project: (columns, signal) => engine.project(relation, columns, signal ? { signal } : {}),
        materialise: (select, signal) => engine.materialise(relation, select, signal ? { signal } : {}),
        peakRssMb,
        onProgress: (p) => {
          stage = p.stage;
          const point = tracker.event(p, Date.now());
          if (p.done || !p.pass) send(point, p.done);
        },
        signal,
      });
      if (signal.aborted) throw new AuditCancelled();
      const cube = cubeToArrowIpc(cells);
      const wireReport = encodeReport(report);
      capped(cube.byteLength + JSON.stringify(wireReport).length, 'audit result');
      source.findings = findingsWithRows(report, relation);
      reply({ kind: 'audit-result', id, report: wireReport, cube });
    } catch (error) {
      if (signal.aborted || error instanceof AuditCancelled) throw new EngineError('cancelled', 'The audit was cancelled.');
      // The core's own errors (a role that names no column, a malformed target table) keep their words.
      throw error instanceof EngineError ? error : new EngineError('internal', error instanceof Error ? error.message : String(error));
    } finally {
      clearInterval(ticker);
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
        target?.abort();
        await engine.cancel();
        reply({ kind: 'done', id: request.id });
        return;
      }
      case 'register': {
        const registered = await engine.register(request.source);
        const inputs = await fingerprintFiles(registered.files);
        sources.set(registered.relation, { registered, inputs, findings: [] });
        reply({ kind: 'registered', id: request.id, source: { relation: registered.relation, format: registered.format, files: [...registered.files], scanSql: registered.scanSql }, inputs });
        return;
      }
      case 'profile': {
        const source = sourceOf(request.source);
        // the role evidence (app/core/roles/evidence.ts) is one more read of the first rows, next to the log
        const inspection = await inspectRoles((sql) => engine.query(sql), request.source);
        source.inspection = inspection;
        const { profile, evidence } = inspection;
        reply({ kind: 'profiled', id: request.id, profile: encodeProfile(profile), evidence: encodeValue(evidence) });
        return;
      }
      case 'audit':
        await audit(request);
        return;
      case 'drill-page': {
        const { after, ...page } = request.page;
        const cursor = after ? { key: after.key.map(decodeCell), types: after.types, tied: after.tied } : null;
        const table = encodeTable(await engine.query(drillPageSql(await drillSpec(request), { ...page, after: cursor })));
        capped(JSON.stringify(table).length, 'page of rows');
        reply({ kind: 'rows', id: request.id, table });
        return;
      }
      case 'drill-count':
        reply({ kind: 'count', id: request.id, rows: parseDrillCount(await engine.query(drillCountSql(await drillSpec(request)))) });
        return;
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
      request = parseHostRequest(raw);
    } catch (error) {
      replyError(idOf(raw), error);
      return;
    }
    // Ping and cancel are answered at once; everything else in arrival order (a profile sent right after
    // its register waits for it).
    const run = request.kind === 'ping' || request.kind === 'cancel' ? handle(request) : inOrder(() => handle(request));
    run.catch((error: unknown) => replyError(request.id, error));
  });
}
