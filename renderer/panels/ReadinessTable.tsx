import { useState } from 'react';
import type { Report } from '../../app/core/model/report.ts';
import { readinessCauses } from '../../app/core/verdict.ts';
import { StatusBadge } from '../components/StatusBadge.tsx';
import { formatShare, formatValue, segmentLabel } from '../format.ts';

const FIRST = 12;

export function ReadinessTable({ report }: { report: Report }) {
  const [all, setAll] = useState(false);
  if (report.segments.length === 0) return null;
  const order = { fail: 0, warn: 1, pass: 2 } as const;
  const rows = [...report.segments].sort((a, b) => order[a.status] - order[b.status] || b.rows - a.rows);
  const shown = all ? rows : rows.slice(0, FIRST);
  const causes = readinessCauses(report.segments);
  const counts = { fail: rows.filter((r) => r.status === 'fail').length, warn: rows.filter((r) => r.status === 'warn').length };
  return (
    <section aria-labelledby="readiness-title">
      <h2 id="readiness-title">Readiness by segment</h2>
      <p className="muted">{rows.length} segments: {counts.fail} failing, {counts.warn} with warnings, {rows.length - counts.fail - counts.warn} passing. Worst first.</p>
      {causes.length > 0 && (
        <>
          <p>Segments not ready, by cause:</p>
          <ul className="causes">{causes.map((c) => <li key={c.cause}>{c.cause}: <strong>{c.segments}</strong> of {rows.length} segments</li>)}</ul>
        </>
      )}
      <div className="table-scroll">
        <table className="readiness">
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
      {rows.length > FIRST && (
        <button type="button" className="button small" onClick={() => setAll(!all)}>{all ? `Show the first ${FIRST} only` : `Show all ${rows.length} segments`}</button>
      )}
    </section>
  );
}
