import { inspectRoles, runAuditDetailed, type AuditRequest, type RoleInspection } from '../../app/core/audit.ts';
import type { InputFile } from '../../app/core/model/report.ts';
import { ProgressTracker, type AuditProgressEvent } from '../../app/core/progress.ts';
import { drillCountSql, drillPageSql, parseDrillCount, type DrillSpec } from '../../app/core/scan/drill.ts';
import type { RunQuery } from '../../app/core/table.ts';
import type { CubeCell } from '../../app/core/cube/types.ts';
import { projectionOf } from '../../app/engine/audit-hooks.ts';
import { cubeToArrowIpc } from '../../app/engine/cube-arrow.ts';
import { EngineError, type Engine } from '../../app/engine/types.ts';
import type { WasmArrowTables } from '../../app/engine/wasm-browser.ts';
import { loadCubeSession, type CubeSession } from './cube-session.ts';
import type { AuditDraft } from '../state/draft.ts';
import type { AuditBackend, AuditOutcome, LogInput, Progress, RowSelection, RowsRequest } from './backend.ts';
import { describeFiles } from './digest.ts';
import { formatOfInput } from './source-files.ts';
import type { OpenedSource } from './status.ts';

export interface EngineBackendOptions {
  /** Hashes the files for the report; the browser default hashes them in a worker. */
  readonly describe?: (files: readonly File[]) => Promise<InputFile[]>;
  /** The page's DuckDB-Wasm worker the audit's cube is loaded into for interactive SQL. */
  readonly cubeTables?: () => Promise<WasmArrowTables>;
}

/** The cube as table `cube` in the page's worker; without a worker, interactive views fall back to the cells. */
export async function cubeSessionOf(tables: Promise<WasmArrowTables> | undefined, ipc: () => Uint8Array, cells: readonly CubeCell[], segmentColumns: readonly string[]): Promise<{ cube?: CubeSession }> {
  if (!tables) return {};
  try {
    return { cube: await loadCubeSession(await tables, ipc(), cells, segmentColumns) };
  } catch (error) {
    console.warn(`The cube could not be loaded into the page's DuckDB-Wasm; regrouping runs on the cube cells in the page instead: ${error instanceof Error ? error.message : String(error)}`);
    return {};
  }
}


export function auditRequest(source: OpenedSource, draft: AuditDraft, engine: string): AuditRequest {
  return {
    relation: source.relation,
    scanSql: source.scanSql,
    input: { files: [...source.files], format: source.format },
    roles: { ...draft.roles, segments: [...draft.segments] },
    targets: draft.targets.map((t) => (t.tableText === undefined ? { spec: t.spec } : { spec: t.spec, tableText: t.tableText })),
    settings: { ...draft.settings },
    engine,
  };
}

/** A host that found a picked file by name must have found that file, not another of the same name. */
export function sizeMismatch(picked: readonly File[], found: readonly InputFile[]): string | null {
  for (const file of picked) {
    const match = found.find((f) => (f.path.split(/[\\/]/).pop() ?? f.path) === file.name);
    if (!match) return `The local engine did not report opening ${file.name}.`;
    if (match.bytes !== file.size) {
      return `The local engine found a different ${file.name} (${match.path}, ${match.bytes.toLocaleString('en')} bytes; the picked file has ${file.size.toLocaleString('en')}). Type the picked file's full path instead.`;
    }
  }
  return null;
}

export function sourceLabel(names: readonly string[]): string {
  return names.length === 1 ? (names[0] ?? '') : `${names[0]} and ${names.length - 1} more`;
}

/** The drill-down spec for a selection of an opened source: its relation, and the profile's column types. */
export function drillSpecOf(source: OpenedSource, selection: RowSelection): DrillSpec {
  return { relation: source.relation, roles: selection.roles, selection: selection.selection, columnTypes: Object.fromEntries(source.profile.columns.map((c) => [c.name, c.type])) };
}

/**
 * An audit backend over an Engine in the page's own worker (standalone web mode): the SQL runs in the
 * page's DuckDB-Wasm and crosses no process boundary. The engine host has its own (host-backend.ts).
 */
export function createEngineBackend(engine: Engine, options: EngineBackendOptions): AuditBackend {
  const run: RunQuery = (sql) => engine.query(sql);
  const describe = options.describe ?? describeFiles;
  /** Each opened source's inspection: its audits reuse the profile made on open (a log is profiled once). */
  const inspections = new Map<string, RoleInspection>();
  return {
    engineKind: engine.kind,

    async open(input: LogInput): Promise<OpenedSource> {
      const { names, choice } = formatOfInput(input);
      const csv = choice.csv ? { csv: choice.csv } : {};
      if (input.kind !== 'files') throw new EngineError('unsupported-format', 'The page\'s own engine reads picked or dropped files; it cannot open a path.');
      const digests = describe(input.files);
      digests.catch(() => undefined);
      const registered = await engine.register({ kind: 'file', files: [...input.files], format: choice.format, ...csv });
      const inspection = await inspectRoles(run, registered.relation);
      inspections.set(registered.relation, inspection);
      const { profile, evidence, suggestions } = inspection;
      return {
        label: sourceLabel(names.map((n) => n.split(/[\\/]/).pop() ?? n)),
        relation: registered.relation,
        scanSql: registered.scanSql,
        format: registered.format,
        files: await digests,
        profile,
        evidence,
        suggestions,
      };
    },

    async run(source: OpenedSource, draft: AuditDraft, onProgress: (p: Progress) => void, signal: AbortSignal): Promise<AuditOutcome> {
      const request = auditRequest(source, draft, engine.kind);
      const inspection = inspections.get(source.relation);
      const targets = request.targets ?? [];
      // The worker starts while the audit runs.
      const tables = options.cubeTables?.();
      tables?.catch(() => undefined);
      const onAbort = () => { void engine.cancel(); };
      signal.addEventListener('abort', onAbort, { once: true });
      // Where the audit is (app/core/progress.ts), from the audit's own events and the engine's query progress when it tells.
      const tracker = new ProgressTracker(Date.now());
      let stage: AuditProgressEvent['stage'] = 'profile';
      const ticker = setInterval(() => onProgress({ stage, point: tracker.sample(engine.queryProgress?.() ?? null, Date.now()) }), 500);
      const onAudit = (p: AuditProgressEvent): void => {
        stage = p.stage;
        onProgress({ stage: p.stage, ...(p.done ? { done: true } : {}), point: tracker.event(p, Date.now()) });
      };
      try {
        const { report, cells, profile } = await runAuditDetailed(run, { ...request, ...(inspection ? { inspection } : {}), ...projectionOf(engine, source.relation), onProgress: onAudit, signal });
        const cube = await cubeSessionOf(tables, () => cubeToArrowIpc(cells), cells, report.roles.segments);
        return { report, workspace: { cells, profile, targets, ...cube } };
      } finally {
        clearInterval(ticker);
        signal.removeEventListener('abort', onAbort);
      }
    },

    rows: (source: OpenedSource, request: RowsRequest) => engine.query(drillPageSql(drillSpecOf(source, request), request.page)),

    async rowCount(source: OpenedSource, selection: RowSelection): Promise<number> {
      return parseDrillCount(await engine.query(drillCountSql(drillSpecOf(source, selection))));
    },

    close: () => engine.close(),
  };
}
