import type { CheckId, Report } from '../../app/core/model/report.ts';
import { FindingList } from '../components/FindingList.tsx';
import { SeriesView } from '../components/SeriesView.tsx';
import { StatusBadge } from '../components/StatusBadge.tsx';
import { shownStatus } from '../../app/charts/labels.ts';
import { withTimesInWords } from '../format.ts';

/** One check inside a themed panel: status, summary, its series, its findings folded away. */
export function CheckSection({ report, id, onOpenCheck }: { report: Report; id: CheckId; onOpenCheck: (id: CheckId) => void }) {
  const check = report.checks.find((c) => c.id === id);
  if (!check) return null;
  return (
    <section className="card check-section" aria-labelledby={`section-${id}`}>
      <h2 id={`section-${id}`}>{check.title} <StatusBadge status={shownStatus(check)} /></h2>
      <p>{withTimesInWords(check.summary)}</p>
      {(check.series ?? []).filter((s) => s.kind !== 'heatmap').map((s) => <SeriesView key={s.name} series={s} />)}
      {check.findings.length > 0 && (
        <details>
          <summary>{check.findings.length} finding{check.findings.length === 1 ? '' : 's'}</summary>
          <FindingList findings={check.findings} limit={20} />
        </details>
      )}
      <button type="button" className="button link" onClick={() => onOpenCheck(id)}>All details of <code>{id}</code></button>
    </section>
  );
}
