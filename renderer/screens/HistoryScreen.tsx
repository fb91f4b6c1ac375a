import { useMemo, useState } from 'react';
import { historySegmentsHeight } from '../../app/charts/index.ts';
import type { History, LabelledReport } from '../../app/core/compare/history.ts';
import type { Report } from '../../app/core/model/report.ts';
import { renderHistoryHtml } from '../../app/report/history-html.ts';
import { serializeHistory } from '../../app/report/history-json.ts';
import { chartForHistorySegments, chartsForHistoryTarget } from '../charts.ts';
import { EChart } from '../components/EChart.tsx';
import { FileDropZone } from '../components/FileDropZone.tsx';
import { StatusBadge } from '../components/StatusBadge.tsx';
import { VerdictBadge } from '../components/VerdictBadge.tsx';
import { downloadText } from '../export/report-file.ts';
import { formatShare, formatValue, segmentLabel } from '../format.ts';
import type { StatusKey } from '../palette.ts';
import { historyOf, readReportFiles, reportsOfTexts, withReports, type ReadReports } from '../state/history.ts';
import type { RecentAudit } from '../state/recent.ts';
import { countText } from '../../app/core/count-words.ts';

interface Props {
  readonly reports: readonly LabelledReport[];
  readonly onReports: (reports: LabelledReport[]) => void;
  /** The audit open in the app, offered as one more report. */
  readonly current: { readonly label: string; readonly report: Report } | null;
  readonly recent: readonly RecentAudit[];
}

const STATUSES: ReadonlySet<string> = new Set(['pass', 'warn', 'fail', 'skipped', 'error']);

function Status({ status }: { status: string | null | undefined }) {
  if (status && STATUSES.has(status)) return <StatusBadge status={status as StatusKey} />;
  return <span className="muted" title="not in this report">{status ?? '—'}</span>;
}

function span(e: History['entries'][number]): string {
  return e.span ? `${e.span.from.slice(0, 10)} – ${e.span.to.slice(0, 10)}` : `audited ${e.started_at.slice(0, 10)}`;
}

/** Web modes: a hidden file input behind a button, and a drop zone; the desktop app shows its own dialog. */
function ReportPicker({ onRead }: { onRead: (read: ReadReports) => void }) {
  const desktop = window.counterweight?.kind === 'desktop';
  const choose = async (openInput: () => void) => {
    if (!desktop) { openInput(); return; }
    try {
      const chosen = await window.counterweight?.chooseReports();
      if (chosen) onRead(reportsOfTexts(chosen));
    } catch (error) {
      onRead({ reports: [], problems: [(error as Error).message] });
    }
  };
  return (
    <FileDropZone
      name="history"
      title="Drop saved report files here"
      hint={<>Report JSON files as the audit writes them (<code>--json</code> or Export report JSON), one per log or week.</>}
      inputLabel="Saved report files"
      accept=".json,application/json"
      button="Choose reports…"
      onFiles={(list) => { void readReportFiles(list).then(onRead); }}
      onChoose={(openInput) => { void choose(openInput); }}
    />
  );
}

function TargetHistory({ h, labels }: { h: History; labels: readonly string[] }) {
  const [name, setName] = useState(h.targets[0]?.name ?? '');
  const target = h.targets.find((t) => t.name === name) ?? h.targets[0];
  const charts = useMemo(() => (target ? chartsForHistoryTarget(labels, target) : null), [labels, target]);
  if (!target || !charts) return <p className="muted">The reports hold no target policies.</p>;
  const row = (label: string, values: readonly (number | null)[], show: (v: number | null) => string = formatValue) => (
    <tr><th scope="row">{label}</th>{values.map((v, i) => <td key={i} className="num">{show(v)}</td>)}</tr>
  );
  return (
    <>
      {h.targets.length > 1 && (
        <p>
          <label htmlFor="history-target">Target </label>
          <select id="history-target" value={target.name} onChange={(e) => setName(e.target.value)}>
            {h.targets.map((t) => <option key={t.name} value={t.name}>{t.name}</option>)}
          </select>
        </p>
      )}
      <div className="chart-pair">
        <figure className="chart-figure">
          <figcaption>{target.name}: estimated value (SNIPS) with its 95% interval</figcaption>
          <EChart option={charts.estimate} height={260} label={`${target.name}: SNIPS estimate and 95% interval per report`} />
        </figure>
        <figure className="chart-figure">
          <figcaption>{target.name}: ESS / n, tail shape k̂ and support deficit</figcaption>
          <EChart option={charts.weights} height={260} label={`${target.name}: ESS fraction, k̂ and support deficit per report`} />
        </figure>
      </div>
      <div className="table-scroll">
        <table className="history-table" data-testid="history-target-table">
          <thead><tr><th scope="col">{target.name}</th>{labels.map((l) => <th key={l} scope="col">{l}</th>)}</tr></thead>
          <tbody>
            {row('ESS', target.ess)}
            {row('ESS / n', target.ess_fraction, formatShare)}
            {row('k̂ (tail shape)', target.khat)}
            {row('Support deficit', target.support_deficit, formatShare)}
            <tr><th scope="row">SNIPS [95% CI]</th>{target.snips.map((v, i) => <td key={i} className="num">{formatValue(v)} [{formatValue(target.snips_ci_low[i])}, {formatValue(target.snips_ci_high[i])}]</td>)}</tr>
          </tbody>
        </table>
      </div>
    </>
  );
}

type FindingFilter = 'all' | 'new' | 'gone';

function HistoryView({ h }: { h: History }) {
  const labels = useMemo(() => h.entries.map((e) => e.label), [h]);
  const [changedOnly, setChangedOnly] = useState(false);
  const [findingFilter, setFindingFilter] = useState<FindingFilter>('all');
  const latest = h.entries.length - 1;
  const segments = useMemo(() => (changedOnly ? h.segments.filter((s) => new Set(s.statuses).size > 1) : h.segments), [h, changedOnly]);
  const segmentChart = useMemo(() => chartForHistorySegments(labels, segments), [labels, segments]);
  const findings = h.findings.filter((f) => findingFilter === 'all' || (findingFilter === 'new' ? f.first === latest && latest > 0 : f.last < latest));
  const head = <>{labels.map((l) => <th key={l} scope="col">{l}</th>)}</>;
  return (
    <>
      <p>
        <button type="button" className="button small" onClick={() => downloadText(serializeHistory(h), 'history.json')}>Export history JSON</button>{' '}
        <button type="button" className="button small" onClick={() => downloadText(renderHistoryHtml(h), 'history.html', 'text/html')}>Export history HTML</button>
      </p>

      <h2 id="history-verdicts">Verdict over time</h2>
      <table className="checks-table" data-testid="history-verdicts">
        <thead><tr><th scope="col">Report</th><th scope="col">Log</th><th scope="col">Rows</th><th scope="col">Verdict</th></tr></thead>
        <tbody>{h.entries.map((e) => <tr key={e.label}><td>{e.label}</td><td>{span(e)}</td><td className="num">{countText(e.rows)}</td><td><VerdictBadge verdict={e.verdict} compact /></td></tr>)}</tbody>
      </table>

      <h2 id="history-targets">Targets</h2>
      <TargetHistory h={h} labels={labels} />

      <h2 id="history-checks">Checks</h2>
      <div className="table-scroll">
        <table className="history-table" data-testid="history-checks">
          <thead><tr><th scope="col">Check</th>{head}</tr></thead>
          <tbody>{h.checks.map((c) => <tr key={c.id} data-check={c.id}><th scope="row">{c.title} <code>{c.id}</code></th>{c.statuses.map((s, i) => <td key={i}><Status status={s} /></td>)}</tr>)}</tbody>
        </table>
      </div>

      <h2 id="history-segments">Segment readiness</h2>
      <p>
        <input id="history-changed-only" type="checkbox" checked={changedOnly} onChange={(e) => setChangedOnly(e.target.checked)} />
        <label htmlFor="history-changed-only"> Only segments whose readiness changed</label>
        <span className="muted"> · {segments.length} of {h.segments.length} segments</span>
      </p>
      {segments.length > 0 && <EChart option={segmentChart} height={historySegmentsHeight(segments.length)} label="Segment readiness per report; the table below lists the same" />}
      <details>
        <summary>Segment readiness as a table</summary>
        <div className="table-scroll">
          <table className="history-table" data-testid="history-segments">
            <thead><tr><th scope="col">Segment</th>{head}</tr></thead>
            <tbody>{segments.map((s) => <tr key={segmentLabel(s.segment)}><th scope="row">{segmentLabel(s.segment)}</th>{s.statuses.map((st, i) => <td key={i}><Status status={st} /> <span className="muted">{formatValue(s.rows[i])} rows</span></td>)}</tr>)}</tbody>
          </table>
        </div>
      </details>

      <h2 id="history-findings">Findings: when each was first seen</h2>
      <p>
        <label htmlFor="history-finding-filter">Show </label>
        <select id="history-finding-filter" value={findingFilter} onChange={(e) => setFindingFilter(e.target.value as FindingFilter)}>
          <option value="all">every finding ({h.findings.length})</option>
          <option value="new">first seen in the latest report</option>
          <option value="gone">no longer in the latest report</option>
        </select>
      </p>
      <div className="table-scroll">
        <table className="history-table" data-testid="history-findings">
          <thead><tr><th scope="col">Check</th><th scope="col">Where</th><th scope="col">First seen</th><th scope="col">Last seen</th>{head}</tr></thead>
          <tbody>{findings.map((f, k) => (
            <tr key={k} data-first={f.first}>
              <td><code>{f.check}</code>{f.scope ? <div className="muted">by {f.scope}</div> : null}</td>
              <td>{segmentLabel(f.segment)}{f.action !== undefined ? <div>action {f.action}</div> : null}{f.target !== undefined ? <div className="muted">target {f.target}</div> : null}</td>
              <td>{labels[f.first]}</td>
              <td>{labels[f.last]}</td>
              {f.seen.map((s, i) => <td key={i}><Status status={s} /></td>)}
            </tr>
          ))}</tbody>
        </table>
      </div>
      {findings.length === 0 && <p className="muted">None.</p>}
    </>
  );
}

export function HistoryScreen({ reports, onReports, current, recent }: Props) {
  const [problems, setProblems] = useState<readonly string[]>([]);
  const history = useMemo(() => historyOf(reports), [reports]);
  const add = (read: ReadReports) => {
    setProblems(read.problems);
    if (read.reports.length > 0) onReports(withReports(reports, read.reports));
  };
  const has = (label: string) => reports.some((r) => r.label === label);
  const stored = recent.filter((r) => r.report);
  return (
    <section aria-labelledby="history-title" className="screen">
      <h1 id="history-title">Audit history</h1>
      <p className="muted">Several saved reports read as one history, oldest log first: the verdict, each target&apos;s figures and every segment&apos;s readiness per report, and when each finding first appeared. The same history as <code>counterweight history FOLDER</code>.</p>
      <div className="open-grid">
        <ReportPicker onRead={add} />
        {(current || stored.length > 0) && (
          <div className="card">
            <h2>Reports in this app</h2>
            <ul className="recent-list">
              {current && <li><span className="recent-label">{current.label}</span> <span className="muted">the open audit</span> <button type="button" className="button small" disabled={has(current.label)} onClick={() => add({ reports: [current], problems: [] })}>Add</button></li>}
              {stored.map((r) => {
                const label = `${r.label} (${r.at})`;
                return <li key={r.id}><span className="recent-label">{r.label}</span> <span className="muted">{new Date(r.at).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short' })}</span> <button type="button" className="button small" disabled={has(label)} onClick={() => add({ reports: [{ label, report: r.report! }], problems: [] })}>Add</button></li>;
              })}
            </ul>
          </div>
        )}
      </div>
      {problems.length > 0 && <div className="problems" role="alert"><strong>Not added:</strong><ul>{problems.map((p, i) => <li key={i}>{p}</li>)}</ul></div>}
      {reports.length > 0 && (
        <p data-testid="history-chosen">
          {reports.length} report{reports.length === 1 ? '' : 's'}: {reports.map((r) => r.label).join(', ')}{' '}
          <button type="button" className="button link" onClick={() => { onReports([]); setProblems([]); }}>Clear</button>
        </p>
      )}
      {history ? <HistoryView h={history} /> : <p className="muted">Choose or drop two or more saved reports to see how the audit changed.</p>}
    </section>
  );
}
