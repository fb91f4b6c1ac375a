import { useState } from 'react';
import type { Report } from '../../app/core/model/report.ts';
import { readinessCauses } from '../../app/core/verdict.ts';
import { StatusBadge } from '../components/StatusBadge.tsx';
import { formatShare, formatValue, segmentLabel } from '../format.ts';
import { countText, counted } from '../../app/core/count-words.ts';


export function ReadinessTable({ report }: { report: Report }) {
  const [passingShown, setPassingShown] = useState(false);
  if (report.segments.length === 0) return null;
  const order = { fail: 0, warn: 1, pass: 2 } as const;
  const rows = [...report.segments].sort((a, b) => order[a.status] - order[b.status] || b.rows - a.rows);
  // Failing and warning segments always show; the passing ones fold away behind a button, and the table
  // scrolls inside a capped height once they are shown.
  const notPassing = rows.filter((r) => r.status !== 'pass');
  const passing = rows.length - notPassing.length;
  const shown = passingShown ? rows : notPassing;
  const causes = readinessCauses(report.segments);
  const counts = { fail: rows.filter((r) => r.status === 'fail').length, warn: rows.filter((r) => r.status === 'warn').length };
  return (
    <section aria-labelledby="readiness-title">
      <h2 id="readiness-title">Readiness by segment</h2>
      <p className="muted">{counted(rows.length, 'segment')}: {countText(counts.fail)} failing, {countText(counts.warn)} with warnings, {countText(passing)} passing. Worst first.</p>
      {causes.length > 0 && (
        <>
          <p>Segments not ready, by cause:</p>
          <ul className="causes">{causes.map((c) => <li key={c.cause}>{c.cause}: <strong>{countText(c.segments)}</strong> of {counted(rows.length, 'segment')}</li>)}</ul>
        </>
      )}
      {shown.length > 0 && (
      <div className="table-scroll readiness-scroll" tabIndex={0} role="region" aria-label="Readiness by segment, worst first">
        <table className="readiness" data-testid="readiness-table">
          <thead><tr><th scope="col">Status</th><th scope="col">Segment</th><th scope="col">Rows</th><th scope="col">Share</th><th scope="col">Explored</th><th scope="col">Top action share</th><th scope="col">Min propensity</th><th scope="col">Why</th></tr></thead>
          <tbody>
            {shown.map((s) => (
              <tr key={segmentLabel(s.segment)}>
                <td><StatusBadge status={s.status} /></td>
                <td>{segmentLabel(s.segment)}</td>
                <td>{formatValue(s.rows)}</td>
                <td>{formatShare(s.share)}</td>
                <td>{s.explored ? 'yes' : 'no'}</td>
                <td>{formatShare(s.top_action_share)}</td>
                <td>{formatValue(s.min_propensity)}</td>
                <td className="flags">{s.causes ? s.causes.join('; ') : s.drift_flags.length === 0 ? '—' : s.drift_flags.join('; ')}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      )}
      {passing > 0 && (
        <button type="button" className="button small" aria-expanded={passingShown} onClick={() => setPassingShown(!passingShown)}>
          {passingShown ? `Hide the ${counted(passing, 'passing segment')}` : `Show ${counted(passing, 'passing segment')}`}
        </button>
      )}
    </section>
  );
}
