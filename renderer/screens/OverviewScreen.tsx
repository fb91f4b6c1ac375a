import type { CheckId, Report } from '../../app/core/model/report.ts';
import { StatusBadge } from '../components/StatusBadge.tsx';
import { shownStatus } from '../../app/charts/labels.ts';
import { VerdictBadge } from '../components/VerdictBadge.tsx';
import { Cautions } from '../components/Cautions.tsx';
import { withTimesInWords } from '../format.ts';
import { RemedyLinks } from '../components/RemedyLinks.tsx';
import type { RemedyKind } from '../../app/core/remedies/links.ts';
import { countText, counted } from '../../app/core/count-words.ts';

const VERDICT_SENTENCE: Record<Report['verdict'], string> = {
  supported: 'No check found a problem that would undermine an off-policy estimate from this log.',
  'supported-with-caveats': 'The log can support an estimate, but read the warnings below before trusting it.',
  'not-supported': 'At least one check failed in a way that makes off-policy estimates from this log unreliable.',
};

function titleOf(report: Report, id: CheckId): string {
  return report.checks.find((c) => c.id === id)?.title ?? id;
}

/** Reasons start with their check's title, which the link beside them already shows. */
function withoutTitle(message: string, title: string): string {
  return message.startsWith(`${title}: `) ? message.slice(title.length + 2) : message;
}

export function OverviewScreen({ report, onOpenCheck, onCompare, onRemedies }: { report: Report; onOpenCheck: (id: CheckId) => void; onCompare?: () => void; onRemedies?: (kind: RemedyKind) => void }) {
  const counts = { fail: 0, error: 0, warn: 0, pass: 0, skipped: 0 };
  for (const c of report.checks) counts[c.status]++;
  return (
    <section aria-labelledby="overview-title" className="screen">
      <h1 id="overview-title">Audit overview</h1>
      <div className={`verdict-card verdict-${report.verdict}`}>
        <div className="verdict-line"><span className="muted">Verdict</span> <VerdictBadge verdict={report.verdict} /></div>
        <p>{VERDICT_SENTENCE[report.verdict]}</p>
        <p className="muted">
          {counted(report.input.rows, 'row')} from {report.input.files.map((f) => f.path).join(', ')} ·
          {' '}{countText(counts.fail)} failed, {counts.error ? `${countText(counts.error)} could not run, ` : ''}{counted(counts.warn, 'warning', 'warnings', 'digit')}, {countText(counts.pass)} passed, {countText(counts.skipped)} skipped ·
          {' '}engine {report.run.engine}, {report.run.seconds.toFixed(1)} s
        </p>
        {onCompare && <button type="button" className="button small" onClick={onCompare}>Compare with…</button>}
        {report.reasons.length > 0 && (
          <>
            <h2>What decides it</h2>
            <ul className="reasons">
              {report.reasons.map((r, i) => (
                <li key={i}>
                  <span><StatusBadge status={r.status} /></span>
                  <button type="button" className="button link" onClick={() => onOpenCheck(r.check)}>{titleOf(report, r.check)}</button>
                  <span>
                    {withTimesInWords(withoutTitle(r.message, titleOf(report, r.check)))}
                    {onRemedies && report.remedies && <div><RemedyLinks kinds={r.remedies} onRemedies={onRemedies} about={titleOf(report, r.check)} /></div>}
                  </span>
                </li>
              ))}
            </ul>
          </>
        )}
      </div>

      <h2>Every check</h2>
      <table className="checks-table">
        <thead><tr><th scope="col">Status</th><th scope="col">Check</th><th scope="col">Summary</th><th scope="col"><span className="visually-hidden">Details</span></th></tr></thead>
        <tbody>
          {report.checks.map((c) => (
            <tr key={c.id} data-check={c.id}>
              <td><StatusBadge status={shownStatus(c)} /></td>
              <td><strong>{c.title}</strong><div className="muted"><code>{c.id}</code></div></td>
              <td>{withTimesInWords(c.summary)}</td>
              <td><button type="button" className="button small" onClick={() => onOpenCheck(c.id)} aria-label={`Details of ${c.title}`}>Details</button></td>
            </tr>
          ))}
        </tbody>
      </table>
      <Cautions cautions={report.cautions} />
    </section>
  );
}
