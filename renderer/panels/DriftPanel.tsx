import type { CheckId, Report } from '../../app/core/model/report.ts';
import { checksOnPanel } from '../../app/core/checks/registry.ts';
import { CheckSection } from './CheckSection.tsx';

export function DriftPanel({ report, onOpenCheck }: { report: Report; onOpenCheck: (id: CheckId) => void }) {
  return (
    <section className="screen" aria-labelledby="drift-title">
      <h1 id="drift-title">Drift over time</h1>
      <p className="lead">
        Whether rewards changed within a segment and action (so a policy change is not mistaken for reward drift),
        and whether the logging policy's action mix moved, with or without its logged propensities.
      </p>
      {checksOnPanel('drift').map((id) => (
        <CheckSection key={id} report={report} id={id} onOpenCheck={onOpenCheck} />
      ))}
    </section>
  );
}
