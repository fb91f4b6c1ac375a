import { suggestRoles } from '../../app/core/roles/roles.ts';
import { cubeFromArrowIpc } from '../../app/engine/cube-arrow.ts';
import type { HostDrill, HostEngine } from '../../app/engine/host/client.ts';
import { findingsWithRows } from '../../app/engine/host/codec.ts';
import type { WasmArrowTables } from '../../app/engine/wasm-browser.ts';
import { EngineError } from '../../app/engine/types.ts';
import type { AuditDraft } from '../state/draft.ts';
import type { AuditBackend, AuditOutcome, LogInput, Progress, RowSelection, RowsRequest } from './backend.ts';
import { cubeSessionOf, sizeMismatch, sourceLabel } from './engine-backend.ts';
import { formatOfInput } from './source-files.ts';
import type { OpenedSource } from './status.ts';

/**
 * An audit backend over the engine host (desktop and hosted modes). Every request is a named kind of
 * the host protocol: the host registers the log and fingerprints its files, profiles it, runs the whole
 * audit next to it and pages the rows behind a cell or a finding; the page sends no SQL. The cube it
 * sends back is loaded into the page's own DuckDB-Wasm worker for the interactive views.
 */
export function createHostBackend(engine: HostEngine, options: { readonly cubeTables?: () => Promise<WasmArrowTables> }): AuditBackend {
  /** Per source: the predicates of the findings of its latest audit, in the order the host numbers them. */
  const findings = new Map<string, string[]>();

  function drillOf(source: OpenedSource, request: RowSelection): HostDrill {
    const { where, ...cell } = request.selection;
    if (where === undefined) return { source: source.relation, roles: request.roles, selection: cell };
    const index = (findings.get(source.relation) ?? []).indexOf(where);
    if (index < 0) throw new EngineError('sql', 'These rows belong to a finding of an earlier audit; run the audit again to list them.');
    return { source: source.relation, roles: request.roles, selection: { segment: {}, finding: index } };
  }

  return {
    engineKind: engine.kind,

    async open(input: LogInput): Promise<OpenedSource> {
      const { names, choice } = formatOfInput(input);
      if (input.kind === 'files') throw new EngineError('unsupported-format', 'The engine host reads files by name or path; a browser File handle cannot be sent to it.');
      const { source: registered, inputs } = await engine.register({ kind: 'path', paths: names, format: choice.format, ...(choice.csv ? { csv: choice.csv } : {}) });
      if (input.kind === 'named') {
        const problem = sizeMismatch(input.files, inputs);
        if (problem) throw new Error(problem);
      }
      const { profile, evidence } = await engine.inspect(registered.relation);
      return {
        label: sourceLabel(names.map((n) => n.split(/[\\/]/).pop() ?? n)),
        relation: registered.relation,
        scanSql: registered.scanSql,
        format: registered.format,
        files: [...inputs],
        profile,
        ...(evidence ? { evidence } : {}),
        suggestions: suggestRoles(profile, evidence),
      };
    },

    async run(source: OpenedSource, draft: AuditDraft, onProgress: (p: Progress) => void, signal: AbortSignal): Promise<AuditOutcome> {
      const targets = draft.targets.map((t) => (t.tableText === undefined ? { spec: t.spec } : { spec: t.spec, tableText: t.tableText }));
      // The worker starts while the audit runs.
      const tables = options.cubeTables?.();
      tables?.catch(() => undefined);
      const { report, cubeIpc } = await engine.audit({
        source: source.relation,
        roles: { ...draft.roles, segments: [...draft.segments] },
        targets,
        settings: { ...draft.settings },
      }, onProgress, signal);
      findings.set(source.relation, findingsWithRows(report, source.relation));
      const cells = cubeFromArrowIpc(cubeIpc);
      const cube = await cubeSessionOf(tables, () => cubeIpc, cells, report.roles.segments);
      return { report, workspace: { cells, profile: source.profile, targets, ...cube } };
    },

    rows: async (source: OpenedSource, request: RowsRequest) => engine.drillPage(drillOf(source, request), request.page),
    rowCount: async (source: OpenedSource, selection: RowSelection) => engine.drillCount(drillOf(source, selection)),
    close: () => engine.close(),
  };
}
