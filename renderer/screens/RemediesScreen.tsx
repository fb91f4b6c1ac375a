import { useEffect, useMemo, useState } from 'react';
import type { PlanRowReport, Report } from '../../app/core/model/report.ts';
import { REMEDY_TITLES, type RemedyKind } from '../../app/core/remedies/links.ts';
import { capLabel } from '../../app/charts/index.ts';
import { planCsv, planJson } from '../../app/core/remedies/plan-table.ts';
import { chartForCaps } from '../charts.ts';
import { EChart } from '../components/EChart.tsx';
import { RowTable, type RowColumn } from '../components/RowTable.tsx';
import { downloadText } from '../export/report-file.ts';
import { formatShare, formatValue, segmentLabel } from '../format.ts';
import type { PlanOptions } from '../../app/core/remedies/plan.ts';
import { planInputsByTarget, remediesWithPlan, timedPlan, type PlanWorkspace, type TimedPlan } from '../state/remedies-plan.ts';

interface Props {
  readonly report: Report;
  /** The cube and targets of the audit on screen; absent for a report opened without them. */
  readonly workspace?: PlanWorkspace;
  /** The section to scroll to (from a reason's link). */
  readonly focus?: RemedyKind;
}

type Estimate = { value: number | null; ci_low: number | null; ci_high: number | null };
type CapsReport = NonNullable<Report['remedies']>['caps'][number];
type ClippedRow = CapsReport['list'][number];
const interval = (e: Estimate) => `${formatValue(e.value)} [${formatValue(e.ci_low)}, ${formatValue(e.ci_high)}]`;
const days = (d: number | null) => (d === null ? 'never at this traffic' : d < 1 ? '< 1' : formatValue(Math.ceil(d * 10) / 10));

const PLAN_COLUMNS: readonly RowColumn<PlanRowReport>[] = [
  { head: 'Rows / day now', cell: (r) => formatValue(r.rows_per_day) },
  { head: 'Least propensity now', cell: (r) => formatValue(r.current_floor) },
  { head: <>Exploration share <span className="sym">η</span></>, cell: (r) => formatShare(r.share) },
  { head: <>Propensity floor <span className="sym">η/K</span></>, cell: (r) => formatValue(r.floor) },
  { head: 'Days needed', cell: (r) => days(r.days) },
  { head: 'Within the days?', cell: (r) => (r.reachable ? 'yes' : 'no'), text: true },
  { head: 'Cost per decision', cell: (r) => formatValue(r.cost) },
  { head: <>Logging policy&apos;s value</>, cell: (r) => formatValue(r.logging_value) },
];

function PlanTable({ rows, testId }: { rows: readonly PlanRowReport[]; testId: string }) {
  return (
    <RowTable
      testId={testId}
      rows={rows}
      head="Segment"
      rowHead={(r) => (Object.keys(r.segment).length === 0 ? <strong>whole log (one share everywhere)</strong> : segmentLabel(r.segment))}
      columns={PLAN_COLUMNS}
      rowData={(r) => ({ 'data-reachable': String(r.reachable) })}
    />
  );
}

interface SliderProps {
  readonly id: string;
  readonly label: string;
  readonly value: number;
  readonly min: number;
  readonly max: number;
  readonly step: number;
  readonly shown: string;
  readonly onChange: (value: number) => void;
}

function Slider({ id, label, value, min, max, step, shown, onChange }: SliderProps) {
  return (
    <div className="slider">
      <label htmlFor={id}>{label}</label>
      <input id={id} type="range" min={min} max={max} step={step} value={value} onChange={(e) => onChange(Number(e.target.value))} aria-valuetext={shown} />
      <output htmlFor={id} data-testid={`${id}-value`}>{shown}</output>
    </div>
  );
}

function PlanSection({ report, target, workspace }: { report: Report; target: string; workspace?: PlanWorkspace }) {
  const remedies = report.remedies!;
  const inputs = useMemo(() => (workspace ? planInputsByTarget(report, workspace).get(target) : undefined), [report, workspace, target]);
  const delta0 = remedies.plan_options.delta[target] ?? null;
  const initial: PlanOptions = { delta: delta0 ?? 0, power: remedies.plan_options.power, alpha: remedies.plan_options.alpha, days: remedies.plan_options.days };
  // The plan is recomputed in the slider's event handler, once per move, not during render.
  const [state, setState] = useState<{ options: PlanOptions; timed: TimedPlan | null }>(() => ({ options: initial, timed: inputs && initial.delta > 0 ? timedPlan(inputs, initial) : null }));
  const { options, timed } = state;
  const { delta, power, alpha, days: planDays } = options;
  const change = (patch: Partial<PlanOptions>) => {
    const next = { ...options, ...patch };
    setState({ options: next, timed: inputs && next.delta > 0 ? timedPlan(inputs, next) : null });
  };
  const exported = useMemo(() => (inputs && timed?.plan ? remediesWithPlan(remedies, inputs, timed.plan) : null), [remedies, inputs, timed]);
  const reportRows = remedies.plan.filter((r) => r.target === target);

  if (delta0 === null) return <p className="muted">No plan: this target has no detectable difference to start from (its estimate has no standard error).</p>;
  if (!inputs) {
    return (
      <>
        <p className="notice">This report was opened without the cube its audit scanned, so the plan is the one the report holds (δ = {formatValue(delta0)}, power {remedies.plan_options.power}, {formatValue(remedies.plan_options.days)} days). Run the audit again to move the sliders.</p>
        <PlanTable rows={reportRows} testId="plan-table" />
      </>
    );
  }
  const logDays = remedies.plan_options.log_days ?? remedies.plan_options.days;
  const fileStem = `plan-${target.replace(/[^\w.-]+/g, '_')}`;
  return (
    <>
      <div className="slider-grid" role="group" aria-label="What the next log should detect">
        <Slider id="plan-delta" label="Detectable difference δ" value={delta} min={delta0 / 5} max={delta0 * 4} step={delta0 / 50} shown={formatValue(delta)} onChange={(v) => change({ delta: v })} />
        <Slider id="plan-power" label="Power" value={power} min={0.5} max={0.99} step={0.01} shown={formatShare(power)} onChange={(v) => change({ power: v })} />
        <Slider id="plan-days" label="Days the next log may run" value={planDays} min={1} max={Math.max(90, Math.ceil(logDays * 3))} step={1} shown={`${formatValue(planDays)} days`} onChange={(v) => change({ days: v })} />
        <div className="slider">
          <label htmlFor="plan-alpha">Two-sided level α</label>
          <select id="plan-alpha" value={alpha} onChange={(e) => change({ alpha: Number(e.target.value) })}>
            {[...new Set([0.01, 0.05, 0.1, remedies.plan_options.alpha])].sort((a, b) => a - b).map((a) => <option key={a} value={a}>{a}</option>)}
          </select>
        </div>
      </div>
      {timed?.error && <div className="problems" role="alert">{timed.error}</div>}
      {timed?.plan && exported && (
        <>
          <p role="status" data-testid="plan-status" data-options={JSON.stringify(timed.plan.options)}>
            The estimate must reach a standard error of {formatValue(timed.plan.targetSe)} (δ / (z<sub>1−α/2</sub> + z<sub>power</sub>)).
            {timed.plan.abRowsPerArm !== null ? <> An on-policy A/B test would need {formatValue(Math.ceil(timed.plan.abRowsPerArm))} rows per arm for the same δ.</> : null}
            <span className="muted"> Recomputed from the cube in this page in {timed.ms.toFixed(1)} ms.</span>
          </p>
          <p>
            <button type="button" className="button small" onClick={() => downloadText(planCsv(exported), `${fileStem}.csv`, 'text/csv')}>Export plan CSV</button>{' '}
            <button type="button" className="button small" onClick={() => downloadText(planJson(exported), `${fileStem}.json`)}>Export plan JSON</button>
          </p>
          <PlanTable rows={exported.plan} testId="plan-table" />
        </>
      )}
    </>
  );
}

/** The grid's caps and, where it lies between them, the cap of least MSE bound, in cap order. */
const CAP_COLUMNS: readonly RowColumn<ClippedRow>[] = [
  { head: 'Capped IPS [95% CI]', cell: (c) => interval(c.estimate) },
  { head: 'Bias bound', cell: (c) => formatValue(c.bias_bound) },
  { head: 'ESS', cell: (c) => formatValue(c.ess) },
  { head: 'Rows clipped', cell: (c) => formatValue(c.clipped_rows) },
  { head: 'Clipped mass', cell: (c) => formatValue(c.clipped_mass) },
  { head: 'MSE bound', cell: (c) => formatValue(c.mse_bound) },
];

function capRows(caps: CapsReport) {
  const best = caps.best;
  return [...caps.list, ...(best && !caps.list.some((c) => c.cap === best.cap) ? [best] : [])].sort((a, b) => a.cap - b.cap);
}

export function RemediesScreen({ report, workspace, focus }: Props) {
  const remedies = report.remedies;
  const targets = remedies?.restricted.map((r) => r.target) ?? [];
  const [target, setTarget] = useState(targets[0] ?? '');
  const chosen = targets.includes(target) ? target : (targets[0] ?? '');
  const caps = remedies?.caps.find((c) => c.target === chosen);
  const restricted = remedies?.restricted.find((r) => r.target === chosen);
  const capsChart = useMemo(() => (caps && caps.list.length > 0 ? chartForCaps(chosen, caps.list, caps.best) : null), [caps, chosen]);
  useEffect(() => {
    if (focus) document.getElementById(`remedies-${focus}`)?.scrollIntoView({ block: 'start' });
  }, [focus]);

  if (!remedies) {
    return (
      <section aria-labelledby="remedies-title" className="screen">
        <h1 id="remedies-title">What would make this usable</h1>
        <p className="notice">This report holds no remedies: it was written by an earlier version, or its log has no usable rows. Run the audit again to see them.</p>
      </section>
    );
  }
  return (
    <section aria-labelledby="remedies-title" className="screen">
      <h1 id="remedies-title">What would make this usable</h1>
      <p className="lead">Three ways on from the audit, each computed from the cube this audit scanned: evaluate only where the log has support, trade bias for variance by capping the weights, or change the logging so the next log can answer.</p>
      <nav aria-label="Remedies" className="remedy-nav">
        {(['restricted', 'caps', 'plan'] as const).map((k) => <a key={k} href={`#remedies-${k}`} onClick={(e) => { e.preventDefault(); document.getElementById(`remedies-${k}`)?.scrollIntoView({ block: 'start' }); }}>{REMEDY_TITLES[k]}</a>)}
      </nav>
      {targets.length > 1 && (
        <p>
          <label htmlFor="remedies-target">Target </label>
          <select id="remedies-target" value={chosen} onChange={(e) => setTarget(e.target.value)}>
            {targets.map((t) => <option key={t} value={t}>{t}</option>)}
          </select>
        </p>
      )}
      {targets.length === 1 && <p>Target: <strong>{chosen}</strong></p>}

      <h2 id="remedies-restricted">{REMEDY_TITLES.restricted}</h2>
      {restricted && (
        <>
          <table className="checks-table metrics-table" data-testid="restricted-table">
            <tbody>
              <tr><th scope="row">Target&apos;s probability mass inside the supported region</th><td className="num">{formatShare(restricted.mass_inside)}</td></tr>
              <tr><th scope="row">Segment × action pairs outside it (of {formatValue(restricted.pairs)})</th><td className="num">{formatValue(restricted.excluded_count)}</td></tr>
              <tr><th scope="row">Restricted estimate, SNIPS [95% CI]</th><td className="num">{interval(restricted.snips)}</td></tr>
              <tr><th scope="row">Restricted IPS [95% CI]</th><td className="num">{interval(restricted.ips)}</td></tr>
              <tr><th scope="row">Restricted doubly robust [95% CI]</th><td className="num">{interval(restricted.dr)}</td></tr>
              <tr><th scope="row">Supported variant ({restricted.variant.method}), SNIPS [95% CI]</th><td className="num">{interval(restricted.variant.snips)}</td></tr>
            </tbody>
          </table>
          <p className="notice" role="note"><strong>Not covered:</strong> {restricted.not_covered}</p>
          {restricted.notes.length > 0 && <ul>{restricted.notes.map((n, i) => <li key={i} className="muted">{n}</li>)}</ul>}
          {restricted.excluded.length > 0 && (
            <details>
              <summary>Pairs outside the region ({restricted.excluded.length === restricted.excluded_count ? restricted.excluded_count : `first ${restricted.excluded.length} of ${restricted.excluded_count}`})</summary>
              <div className="table-scroll">
                <table className="history-table" data-testid="excluded-table">
                  <thead><tr><th scope="col">Segment</th><th scope="col">Action</th><th scope="col">Why</th><th scope="col">Rows</th><th scope="col">Least propensity</th></tr></thead>
                  <tbody>{restricted.excluded.map((p, i) => <tr key={i}><td>{segmentLabel(p.segment)}</td><td>{p.action}</td><td>{p.reason}</td><td className="num">{formatValue(p.rows)}</td><td className="num">{formatValue(p.min_propensity)}</td></tr>)}</tbody>
                </table>
              </div>
            </details>
          )}
        </>
      )}

      <h2 id="remedies-caps">{REMEDY_TITLES.caps}</h2>
      {caps && caps.list.length > 0 ? (
        <>
          <p className="muted">Clipped IPS (weights above the cap M set to M; Bottou et al. 2013, JMLR 14). Its bias is at most max(|r<sub>min</sub>|, |r<sub>max</sub>|) times the clipped mass, for rewards in [{formatValue(remedies.reward_range.min)}, {formatValue(remedies.reward_range.max)}] ({remedies.reward_range.source}).</p>
          {capsChart && <EChart option={capsChart} height={300} label={`${chosen}: capped estimate with 95% interval and bias bound against the cap; the table below lists the same`} />}
          <RowTable
            testId="caps-table"
            rows={capRows(caps)}
            head="Cap M"
            rowHead={(c) => <>{capLabel(c.cap)}{caps.best?.cap === c.cap ? <strong> (least MSE bound)</strong> : null}</>}
            columns={CAP_COLUMNS}
            rowKey={(c) => c.cap}
            rowData={(c) => ({ 'data-best': String(caps.best?.cap === c.cap) })}
          />
        </>
      ) : (
        <p className="muted">No caps for this target{caps?.notes.length ? `: ${caps.notes.join('; ')}` : '.'}</p>
      )}

      <h2 id="remedies-plan">{REMEDY_TITLES.plan}</h2>
      <p className="muted">Per segment, the least ε-greedy share η of exploration (every action then logged with propensity at least η/K) for which the target&apos;s estimate reaches the detectable difference within the days at the segment&apos;s current traffic, and what that exploration costs in expected reward per decision against the logging policy&apos;s own choices.</p>
      <PlanSection key={chosen} report={report} target={chosen} workspace={workspace} />

      <div className="cautions"><h2>Before acting on these</h2><ul>{remedies.cautions.map((c, i) => <li key={i}>{c}</li>)}</ul></div>
    </section>
  );
}
