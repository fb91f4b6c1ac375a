import { useMemo } from 'react';
import type { CheckId, Estimate, Report } from '../../app/core/model/report.ts';
import { chartForEstimates } from '../charts.ts';
import { EChart } from '../components/EChart.tsx';
import { formatValue } from '../format.ts';
import { CheckSection } from './CheckSection.tsx';
import { Term } from '../components/Term.tsx';

function onPolicyValue(report: Report): number | null {
  const metrics = report.checks.find((c) => c.id === 'estimate.preview')?.metrics ?? {};
  const key = Object.keys(metrics).find((k) => /on_policy/.test(k));
  const v = key ? metrics[key] : null;
  return typeof v === 'number' ? v : null;
}

function EstimateCells({ e }: { e: Estimate }) {
  return (
    <>
      <td>{formatValue(e.value)}</td>
      <td>{e.ci_low === null || e.ci_high === null ? '—' : `${formatValue(e.ci_low)} to ${formatValue(e.ci_high)}`}</td>
    </>
  );
}

export function EstimatesPanel({ report, onOpenCheck }: { report: Report; onOpenCheck: (id: CheckId) => void }) {
  const onPolicy = onPolicyValue(report);
  const option = useMemo(() => chartForEstimates(report.targets, onPolicy), [report, onPolicy]);
  return (
    <section className="screen" aria-labelledby="estimates-title">
      <h1 id="estimates-title">Estimate preview</h1>
      <p className="lead">
        What this log would say about each target, with 95% intervals — a preview of what it can support, not a
        result to launch on. {onPolicy !== null && <>The logging policy's own average reward is <strong>{formatValue(onPolicy)}</strong>.</>}
      </p>
      {report.verdict === 'not-supported' && (
        <p className="warnings" role="note">
          The audit found that this log does <strong>not</strong> support off-policy estimates (see the overview). The numbers below show what the
          log would say, not a value to rely on.
        </p>
      )}
      {report.targets.length > 0 && (
        <figure className="series">
          <figcaption><span>Estimated value by target, with 95% intervals</span></figcaption>
          <EChart option={option} label="Estimated value by target with 95% intervals" height={320} />
        </figure>
      )}
      <div className="table-scroll">
        <table className="estimates-table">
          <caption>Estimates by target (95% intervals)</caption>
          <thead>
            <tr><th scope="col">Target</th><th scope="col"><Term metric="ips" label="IPS" /></th><th scope="col">IPS interval</th><th scope="col"><Term metric="snips" label="SNIPS" /></th><th scope="col">SNIPS interval</th><th scope="col"><Term metric="dr" label="Doubly robust" /></th><th scope="col">DR interval</th><th scope="col"><Term metric="detectable_difference" label="Smallest detectable difference" /><br /><span className="help">at 5% two-sided, 80% power</span></th></tr>
          </thead>
          <tbody>
            {report.targets.map((t) => (
              <tr key={t.name}>
                <th scope="row">{t.name}</th>
                <EstimateCells e={t.ips} /><EstimateCells e={t.snips} /><EstimateCells e={t.dr} />
                <td>{formatValue(t.detectable_difference)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <CheckSection report={report} id="estimate.preview" onOpenCheck={onOpenCheck} />
    </section>
  );
}
