import { useMemo, useState } from 'react';
import type { Estimate, Report, TargetSummary } from '../../app/core/model/report.ts';
import { previewTarget, type TargetPreview } from '../../app/core/targets/preview.ts';
import { parseTarget, type TargetContext } from '../../app/core/targets/targets.ts';
import type { AuditWorkspace } from '../engine/status.ts';
import { downloadText } from '../export/report-file.ts';
import { formatShare, formatValue } from '../format.ts';
import { allOn, editProblems, keyLabel, segmentKeys, segmentRow, tableCsv, type TablePolicy, type TableEdits } from '../state/policy-edit.ts';
import type { TargetDraft } from '../state/draft.ts';
import { counted } from '../../app/core/count-words.ts';

interface Props {
  readonly report: Report;
  readonly workspace: AuditWorkspace | undefined;
  readonly onUseTable: (target: TargetDraft) => void;
}

interface EditableTable {
  readonly spec: string;
  readonly policy: TablePolicy;
}

/** Text typed per segment and action; a value becomes a number only when the whole segment is valid. */
type Typed = ReadonlyMap<string, ReadonlyMap<string, string>>;

function numericEdits(typed: Typed): TableEdits {
  return new Map([...typed].map(([key, row]) => [key, new Map([...row].map(([a, text]) => [a, text.trim() === '' ? Number.NaN : Number(text)]))]));
}

interface Metric {
  readonly id: string;
  readonly label: string;
  readonly audited: number | null;
  readonly edited: number | null;
  readonly show: (v: number | null) => string;
  readonly interval?: readonly [Estimate, Estimate];
}

function interval(e: Estimate): string {
  return e.ci_low === null || e.ci_high === null ? '' : ` (${formatValue(e.ci_low)} to ${formatValue(e.ci_high)})`;
}

function metrics(audited: TargetSummary | undefined, edited: TargetPreview | null): Metric[] {
  const share = (v: number | null) => formatShare(v);
  const value = (v: number | null) => formatValue(v);
  const none: Estimate = { value: null, se: null, ci_low: null, ci_high: null };
  const estimate = (id: 'ips' | 'snips' | 'dr', label: string): Metric => {
    const a = audited?.[id] ?? none;
    const e = edited?.[id] ?? none;
    return { id, label, audited: a.value, edited: e.value, show: value, interval: [a, e] };
  };
  return [
    { id: 'support_deficit', label: 'Target mass on cells the log never covers', audited: audited?.support_deficit ?? null, edited: edited?.supportDeficit ?? null, show: share },
    { id: 'ess', label: 'Effective sample size (Kish)', audited: audited?.ess ?? null, edited: edited?.ess ?? null, show: value },
    { id: 'ess_fraction', label: 'Effective sample size / rows', audited: audited?.ess_fraction ?? null, edited: edited?.essFraction ?? null, show: share },
    { id: 'max_weight', label: 'Largest weight', audited: audited?.max_weight ?? null, edited: edited?.maxWeight ?? null, show: value },
    estimate('ips', 'IPS estimate (95% interval)'),
    estimate('snips', 'SNIPS estimate (95% interval)'),
    estimate('dr', 'Doubly robust estimate (95% interval)'),
  ];
}

function editableTables(workspace: AuditWorkspace, ctx: TargetContext): EditableTable[] {
  return workspace.targets.flatMap((t) => {
    if (!t.spec.startsWith('table:') || t.tableText === undefined) return [];
    try {
      const policy = parseTarget(t, ctx);
      return policy.kind === 'table' ? [{ spec: t.spec, policy }] : [];
    } catch {
      return [];
    }
  });
}

function editedFileName(spec: string): string {
  const base = (spec.slice('table:'.length).split(/[\\/]/).pop() ?? 'policy').replace(/\.(csv|json|tsv)$/i, '');
  return `${base}-edited.csv`;
}

/**
 * Moves a table target's probabilities within one segment and shows support, ESS and estimates recomputed
 * by app/core from the cube this audit already scanned: no query goes to the engine.
 */
export function TargetEditor({ report, workspace, onUseTable }: Props) {
  const ctx = useMemo<TargetContext>(() => ({
    actionColumn: report.roles.action ?? 'action',
    logColumns: workspace?.profile.columns.map((c) => c.name) ?? [],
    targetColumn: report.roles.target_propensity ?? null,
  }), [report, workspace]);
  const tables = useMemo(() => (workspace ? editableTables(workspace, ctx) : []), [workspace, ctx]);
  const [which, setWhich] = useState(0);
  const table = tables[Math.min(which, tables.length - 1)];
  const keys = useMemo(() => (table ? segmentKeys(table.policy) : []), [table]);
  const [segment, setSegment] = useState<string | null>(null);
  const key = segment !== null && keys.includes(segment) ? segment : (keys[0] ?? '');
  const [typed, setTyped] = useState<Typed>(new Map());

  const edits = useMemo(() => numericEdits(typed), [typed]);
  const problems = useMemo(() => (table ? editProblems(edits, table.policy.keyColumns) : []), [edits, table]);
  const csv = useMemo(() => (table && problems.length === 0 ? tableCsv(table.policy, edits, ctx.actionColumn) : null), [table, edits, problems, ctx]);
  const outcome = useMemo(() => {
    if (!workspace || !table || csv === null || typed.size === 0) return null;
    const started = performance.now();
    try {
      const preview = previewTarget(workspace.cells, report.roles.segments, parseTarget({ spec: table.spec, tableText: csv }, ctx));
      return { preview, ms: performance.now() - started, error: null };
    } catch (error) {
      return { preview: null, ms: 0, error: error instanceof Error ? error.message : String(error) };
    }
  }, [workspace, table, csv, typed, report, ctx]);

  if (!workspace) {
    return (
      <section className="screen" aria-labelledby="edit-title">
        <h1 id="edit-title">Edit a target policy</h1>
        <p className="notice">This report was opened from the list of recent audits, without the cube its audit scanned. Run the audit again to edit its targets here.</p>
      </section>
    );
  }
  if (!table) {
    return (
      <section className="screen" aria-labelledby="edit-title">
        <h1 id="edit-title">Edit a target policy</h1>
        <p className="notice">This audit ran without a policy-table target. Add one under Targets &amp; thresholds (a .csv or .json of segment values, action and probability) and run the audit again to edit it here.</p>
      </section>
    );
  }

  const policy = table.policy;
  const row = segmentRow(policy, edits, key);
  const typedRow = typed.get(key);
  const textOf = (action: string) => typedRow?.get(action) ?? String(row.get(action) ?? 0);
  const sum = [...row.values()].reduce((s, q) => s + (Number.isFinite(q) ? q : 0), 0);
  const setRow = (next: ReadonlyMap<string, string>) => setTyped(new Map([...typed, [key, next]]));
  const setOne = (action: string, text: string) => setRow(new Map(policy.actions.map((a) => [a, a === action ? text : textOf(a)])));
  const restore = (k: string | null) => setTyped(k === null ? new Map() : new Map([...typed].filter(([x]) => x !== k)));
  const audited = report.targets.find((t) => t.name === policy.name);
  const preview = outcome?.preview ?? null;
  const rows = metrics(audited, preview);
  const editedCount = typed.size;

  return (
    <section className="screen" aria-labelledby="edit-title">
      <h1 id="edit-title">Edit a target policy</h1>
      <p className="lead">
        Change the probabilities a policy table gives within one segment and see its support, effective sample size and
        estimates recomputed at once from the cube this audit already scanned — no new scan of the log. Pareto k̂ and the
        top-1% weight share need the rows behind the largest weights: run the audit with the edited table for those.
      </p>
      <div className="editor-layout">
        <div className="card">
          {tables.length > 1 && (
            <p className="editor-field">
              <label htmlFor="edit-target">Target</label>
              <select id="edit-target" value={which} onChange={(e) => { setWhich(Number(e.target.value)); setTyped(new Map()); setSegment(null); }}>
                {tables.map((t, i) => <option key={t.spec} value={i}>{t.policy.name}</option>)}
              </select>
            </p>
          )}
          <p className="editor-field">
            <label htmlFor="edit-segment">Segment ({policy.keyColumns.join(' · ') || 'all rows'})</label>
            <select id="edit-segment" value={key} onChange={(e) => setSegment(e.target.value)}>
              {keys.map((k) => <option key={k} value={k}>{keyLabel(k) || 'all rows'}{typed.has(k) ? ' (edited)' : ''}</option>)}
            </select>
          </p>
          <table className="edit-table">
            <caption>{policy.name}: probabilities in {keyLabel(key) || 'all rows'}</caption>
            <thead><tr><th scope="col">Action</th><th scope="col">Probability</th><th scope="col"><span className="visually-hidden">Shortcut</span></th></tr></thead>
            <tbody>
              {policy.actions.map((a) => (
                <tr key={a}>
                  <th scope="row">{a}</th>
                  <td>
                    <input
                      className="probability-input"
                      inputMode="decimal"
                      aria-label={`Probability of ${a}`}
                      value={textOf(a)}
                      onChange={(e) => setOne(a, e.target.value)}
                    />
                  </td>
                  <td><button type="button" className="button small" onClick={() => setRow(new Map([...allOn(policy, a)].map(([x, q]) => [x, String(q)])))}>All on {a}</button></td>
                </tr>
              ))}
            </tbody>
            <tfoot><tr><th scope="row">Sum</th><td data-value={sum}>{formatValue(sum)}</td><td /></tr></tfoot>
          </table>
          <div className="actions">
            <button type="button" className="button" disabled={!typed.has(key)} onClick={() => restore(key)}>Restore this segment</button>
            <button type="button" className="button" disabled={editedCount === 0} onClick={() => restore(null)}>Restore every segment{editedCount > 0 ? ` (${editedCount} edited)` : ''}</button>
          </div>
          {problems.length > 0 && <div className="problems" role="alert"><ul>{problems.map((p) => <li key={p}>{p}</li>)}</ul></div>}
        </div>

        <div className="card">
          <h2>Effect of the edit</h2>
          <table className="preview-table" data-testid="edit-preview">
            <thead><tr><th scope="col">Measure</th><th scope="col">In the audit</th><th scope="col">With the edit</th></tr></thead>
            <tbody>
              {rows.map((m) => (
                <tr key={m.id} data-metric={m.id}>
                  <th scope="row">{m.label}</th>
                  <td className="audited" data-value={m.audited ?? ''}>{m.show(m.audited)}{m.interval ? interval(m.interval[0]) : ''}</td>
                  <td className="edited" data-value={preview ? (m.edited ?? '') : ''}>
                    {preview ? <>{m.show(m.edited)}{m.interval ? interval(m.interval[1]) : ''}</> : <span className="muted">{editedCount === 0 ? 'no edit yet' : '—'}</span>}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          {outcome?.error && <p className="problems" role="alert">{outcome.error}</p>}
          {preview && (
            <p className="muted" role="status" data-testid="edit-status">
              Recomputed in {outcome && outcome.ms < 1 ? 'under 1' : Math.round(outcome?.ms ?? 0)} ms from {counted(workspace.cells.length, 'cube cell')}; no query was sent to the engine.
            </p>
          )}
          {preview && preview.unsupported.length > 0 && (
            <>
              <h3>Edited target's mass on cells the log never covers</h3>
              <ul className="unsupported-list">
                {preview.unsupported.slice(0, 5).map((u) => <li key={`${u.segment.join('\u001f')}|${u.action}`}>{u.segment.join(' · ')} · {u.action}: {formatShare(u.mass)} of the target's mass</li>)}
              </ul>
            </>
          )}
          <div className="actions">
            <button type="button" className="button" disabled={csv === null || editedCount === 0} onClick={() => csv && downloadText(csv, editedFileName(table.spec), 'text/csv')}>Download the edited table</button>
            <button
              type="button"
              className="button primary"
              disabled={csv === null || editedCount === 0}
              onClick={() => csv && onUseTable({ spec: `table:${editedFileName(table.spec)}`, tableText: csv, fileName: editedFileName(table.spec) })}
            >
              Audit with the edited table…
            </button>
          </div>
        </div>
      </div>
    </section>
  );
}
