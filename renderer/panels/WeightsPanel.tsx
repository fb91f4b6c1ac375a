import type { CheckId, Report } from '../../app/core/model/report.ts';
import { formatShare, formatValue } from '../format.ts';
import { checksOnPanel } from '../../app/core/checks/registry.ts';
import { CheckSection } from './CheckSection.tsx';
import { weightsRows } from '../../app/report/target-words.ts';

export function WeightsPanel({ report, onOpenCheck }: { report: Report; onOpenCheck: (id: CheckId) => void }) {
  return (
    <section className="screen" aria-labelledby="weights-title">
      <h1 id="weights-title">Weights and support</h1>
      <p className="lead">
        How much of the log each target policy can use. An importance weight is the target's probability of the
        logged action divided by the logging propensity; a few huge weights mean few rows really count.
      </p>
      <div className="table-scroll">
        <table className="targets-table">
          <caption>Target policies</caption>
          <thead>
            <tr>
              <th scope="col">Target</th><th scope="col">Effective sample size</th><th scope="col">ESS / rows</th><th scope="col">Largest weight</th>
              <th scope="col">Weight held by top 1% of rows</th><th scope="col">Pareto k̂ of the weight tail</th><th scope="col">Mass on unlogged cells</th>
            </tr>
          </thead>
          <tbody>
            {weightsRows(report, formatValue).map(({ target: t, spec, khat, khatNote }) => (
              <tr key={t.name}>
                <th scope="row">{t.name}{spec !== null && <div className="muted"><code>{spec}</code></div>}</th>
                <td>{formatValue(t.ess)}</td>
                <td>{formatShare(t.ess_fraction)}</td>
                <td>{formatValue(t.max_weight)}</td>
                <td>{formatShare(t.top1_weight_share)}</td>
                <td>{khat}{khatNote !== null && <div className="muted">{khatNote}</div>}</td>
                <td>{formatShare(t.support_deficit)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {checksOnPanel('weights').map((id) => (
        <CheckSection key={id} report={report} id={id} onOpenCheck={onOpenCheck} />
      ))}
    </section>
  );
}
