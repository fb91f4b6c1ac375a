import { useMemo, useState } from 'react';
import type { Comparison, FindingChange, Headline } from '../../app/core/compare/contract.ts';
import type { CheckId, Report } from '../../app/core/model/report.ts';
import { serializeComparison } from '../../app/report/comparison-json.ts';
import { StatusBadge } from '../components/StatusBadge.tsx';
import { downloadText } from '../export/report-file.ts';
import { comparisonOf, readBaselineFile, type Baseline } from '../state/comparison.ts';
import type { RecentAudit } from '../state/recent.ts';
import { VERDICT_WORDS } from '../components/VerdictBadge.tsx';
import { withTimesInWords } from '../format.ts';
import { countText } from '../../app/core/count-words.ts';

interface Props {
  readonly report: Report;
  readonly baseline: Baseline | null;
  readonly recent: readonly RecentAudit[];
  readonly onBaseline: (baseline: Baseline | null) => void;
  readonly onOpenCheck: (id: CheckId) => void;
}

const where = (f: { segment: Record<string, string>; action?: string; target?: string }) =>
  [Object.entries(f.segment).map(([k, v]) => `${k}=${v}`).join(', ') || 'all rows', f.action ? `action ${f.action}` : '', f.target ? `target ${f.target}` : ''].filter(Boolean).join(' · ');

const num = (x: number | null | undefined) => (x === null || x === undefined ? '—' : Math.abs(x) >= 1000 ? countText(x) : Number(x.toPrecision(3)).toString());

function Status({ status }: { status: string | null }) {
  if (status === 'pass' || status === 'warn' || status === 'fail' || status === 'skipped') return <StatusBadge status={status} />;
  return <span className="muted">{status ?? '—'}</span>;
}

function Headlines({ items, empty }: { items: readonly Headline[]; empty: string }) {
  if (items.length === 0) return <p className="muted">{empty}</p>;
  return <ul className="reasons two">{items.map((h, i) => <li key={i}><span>{h.regression ? <strong>Regression</strong> : null}</span><span>{withTimesInWords(h.message)}</span></li>)}</ul>;
}

function FindingTable({ findings, onOpenCheck, current }: { findings: readonly FindingChange[]; onOpenCheck: (id: CheckId) => void; current: Report }) {
  if (findings.length === 0) return <p className="muted">None.</p>;
  const inCurrent = new Set(current.checks.map((c) => c.id as string));
  return (
    <table className="checks-table">
      <thead><tr><th scope="col">Check</th><th scope="col">Where</th><th scope="col">Then</th><th scope="col">Now</th><th scope="col">Size then → now</th><th scope="col"><span className="visually-hidden">Rows</span></th></tr></thead>
      <tbody>
        {findings.map((f, i) => (
          <tr key={i} data-finding-state={f.state}>
            <td><code>{f.check}</code>{f.scope ? <div className="muted">by {f.scope}</div> : null}</td>
            <td>{where(f)}<div className="muted">{withTimesInWords((f.current ?? f.baseline)?.message ?? '')}</div></td>
            <td><Status status={f.baseline?.status ?? null} /></td>
            <td><Status status={f.current?.status ?? null} /></td>
            <td>{f.size_metric} {num(f.baseline?.size)} → {num(f.current?.size)}</td>
            <td>{f.current && inCurrent.has(f.check) ? <button type="button" className="button small" onClick={() => onOpenCheck(f.check as CheckId)}>Rows behind it</button> : null}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function ComparisonView({ c, current, onOpenCheck }: { c: Comparison; current: Report; onOpenCheck: (id: CheckId) => void }) {
  const changed = (state: FindingChange['state']) => c.findings.filter((f) => f.state === state && (state !== 'persisting' || f.change !== 'same'));
  return (
    <>
      {c.issues.length > 0 && (
        <div className={c.comparable ? 'notice' : 'problems'} role={c.comparable ? 'note' : 'alert'} data-testid="comparability">
          <strong>{c.comparable ? 'Before reading:' : 'These reports are not directly comparable.'}</strong>
          <ul>{c.issues.map((i, k) => <li key={k}>{withTimesInWords(i.message)}</li>)}</ul>
        </div>
      )}
      <div className="verdict-card" data-regression={String(c.regression)}>
        <p><span className="muted">Verdict</span> {VERDICT_WORDS[c.verdict.baseline].words} → <strong>{VERDICT_WORDS[c.verdict.current].words}</strong> ({c.verdict.change === 'same' ? 'unchanged' : c.verdict.change})</p>
        <p><strong>{c.regression ? 'Regression: something that decides the verdict got worse.' : 'No regression.'}</strong></p>
        <button type="button" className="button small" onClick={() => downloadText(serializeComparison(c), 'comparison.json')}>Export comparison JSON</button>
      </div>
      <h2>What got worse ({c.worse.length})</h2>
      <Headlines items={c.worse} empty="Nothing got worse." />
      <h2>What got better ({c.better.length})</h2>
      <Headlines items={c.better} empty="Nothing got better." />
      <h2>Checks</h2>
      <table className="checks-table">
        <thead><tr><th scope="col">Check</th><th scope="col">Then</th><th scope="col">Now</th><th scope="col">Change</th></tr></thead>
        <tbody>{c.checks.map((k) => <tr key={k.id}><td><strong>{k.title}</strong><div className="muted"><code>{k.id}</code></div></td><td><Status status={k.baseline} /></td><td><Status status={k.current} /></td><td>{k.change}</td></tr>)}</tbody>
      </table>
      <h2>New findings ({changed('new').length})</h2>
      <FindingTable findings={changed('new')} onOpenCheck={onOpenCheck} current={current} />
      <h2>Resolved findings ({changed('resolved').length})</h2>
      <FindingTable findings={changed('resolved')} onOpenCheck={onOpenCheck} current={current} />
      {changed('unlisted').length > 0 && <>
        <h2>Findings on one report's list only ({changed('unlisted').length})</h2>
        <p className="muted">The other report's check listed only its first findings, so these may still be there.</p>
        <FindingTable findings={changed('unlisted')} onOpenCheck={onOpenCheck} current={current} />
      </>}
      <h2>Persisting findings whose status changed ({changed('persisting').length})</h2>
      <FindingTable findings={changed('persisting')} onOpenCheck={onOpenCheck} current={current} />
      <h2>Targets</h2>
      <table className="checks-table">
        <thead><tr><th scope="col">Target</th><th scope="col">ESS then → now</th><th scope="col">k̂ then → now</th><th scope="col">Support deficit then → now</th><th scope="col">SNIPS then → now</th><th scope="col">Moved beyond uncertainty</th></tr></thead>
        <tbody>{c.targets.map((t) => (
          <tr key={t.name}><td>{t.name}</td><td>{num(t.ess.baseline)} → {num(t.ess.current)}</td><td>{num(t.khat.baseline)} → {num(t.khat.current)}</td>
            <td>{num(t.support_deficit.baseline)} → {num(t.support_deficit.current)}</td><td>{num(t.snips?.baseline.value)} → {num(t.snips?.current.value)}</td>
            <td>{(['ips', 'snips', 'dr'] as const).filter((k) => t[k]?.differs).map((k) => k.toUpperCase()).join(', ') || 'no'}</td></tr>
        ))}</tbody>
      </table>
      <p className="muted">Two estimates differ when a two-sided z test of their difference has p &lt; {c.alpha}.</p>
    </>
  );
}

export function CompareScreen({ report, baseline, recent, onBaseline, onOpenCheck }: Props) {
  const [problem, setProblem] = useState<string | null>(null);
  const comparison = useMemo(() => (baseline ? comparisonOf(baseline, report) : null), [baseline, report]);
  const stored = recent.filter((r) => r.report);
  const pick = async (file: File | undefined) => {
    if (!file) return;
    try {
      onBaseline(await readBaselineFile(file));
      setProblem(null);
    } catch (error) {
      setProblem((error as Error).message);
    }
  };
  return (
    <section aria-labelledby="compare-title" className="screen">
      <h1 id="compare-title">Compare with a baseline</h1>
      <p className="muted">The current audit against an earlier report: what got worse first, then what is new, resolved or moved.</p>
      <div className="open-choices">
        <label htmlFor="baseline-file">Baseline report (JSON) </label>
        <input id="baseline-file" data-testid="baseline-file-input" type="file" accept=".json,application/json" onChange={(e) => { void pick(e.target.files?.[0]); e.target.value = ''; }} />
        {stored.length > 0 && (
          <>
            <p className="muted">or a recent audit in this browser:</p>
            <ul className="recent-list">
              {stored.map((r) => <li key={r.id}><span className="recent-label">{r.label}</span> <span className="muted">{withTimesInWords(r.at)}</span> <button type="button" className="button small" onClick={() => { onBaseline({ label: `${r.label} (${withTimesInWords(r.at)})`, report: r.report! }); setProblem(null); }}>Use as baseline</button></li>)}
            </ul>
          </>
        )}
      </div>
      {problem && <div className="problems" role="alert">{problem}</div>}
      {baseline && <p>Baseline: <strong>{baseline.label}</strong> <button type="button" className="button link" onClick={() => onBaseline(null)}>Clear</button></p>}
      {comparison && <ComparisonView c={comparison} current={report} onOpenCheck={onOpenCheck} />}
    </section>
  );
}
