import type { Finding } from '../../app/core/model/report.ts';
import { isInstant, loggedValueText, metricText, segmentLabel, withTimesInWords } from '../format.ts';
import { StatusBadge } from './StatusBadge.tsx';
import { SqlBlock } from './SqlBlock.tsx';
import { Term } from './Term.tsx';

function FindingItem({ finding }: { finding: Finding }) {
  const examples = finding.examples ?? [];
  const columns = [...new Set(examples.flatMap((e) => Object.keys(e)))];
  return (
    <li className="finding">
      <div className="finding-head">
        <StatusBadge status={finding.status} />
        <span className="finding-where">
          {segmentLabel(finding.segment)}
          {finding.action !== undefined && <> · action <strong>{finding.action}</strong></>}
          {finding.target !== undefined && <> · target <strong>{finding.target}</strong></>}
          {finding.window && <> · {finding.window.from.slice(0, 16).replace('T', ' ')} to {finding.window.to.slice(0, 16).replace('T', ' ')} UTC</>}
        </span>
      </div>
      <p>{withTimesInWords(finding.message)}</p>
      {Object.keys(finding.metrics).length > 0 && (
        <dl className="finding-metrics">
          {Object.entries(finding.metrics).map(([k, v]) => <div key={k}><dt><Term metric={k} /></dt><dd>{isInstant(v) ? `${metricText(k, v)} UTC` : metricText(k, v)}</dd></div>)}
        </dl>
      )}
      {examples.length > 0 && (
        // a region that scrolls sideways takes the focus, so the keyboard can scroll it (axe scrollable-region-focusable)
        <div className="table-scroll" tabIndex={0} role="region" aria-label={`Example rows: ${segmentLabel(finding.segment)}${finding.action !== undefined ? `, action ${finding.action}` : ""}`}>
          <table className="examples" data-testid="example-rows">
            <caption>Example rows (as logged; times in UTC)</caption>
            <thead><tr>{columns.map((c) => <th key={c} scope="col">{c}</th>)}</tr></thead>
            <tbody>{examples.map((e, i) => <tr key={i}>{columns.map((c) => <td key={c}>{loggedValueText(e[c])}</td>)}</tr>)}</tbody>
          </table>
        </div>
      )}
      {finding.sql && <SqlBlock sql={finding.sql} label="SQL that selects these rows (name your log “log”)" />}
    </li>
  );
}

export function FindingList({ findings, limit = 50 }: { findings: readonly Finding[]; limit?: number }) {
  if (findings.length === 0) return <p className="muted">No findings.</p>;
  const order = { fail: 0, warn: 1, pass: 2 } as const;
  const sorted = [...findings].sort((a, b) => order[a.status] - order[b.status]);
  return (
    <>
      <ul className="findings">{sorted.slice(0, limit).map((f, i) => <FindingItem key={i} finding={f} />)}</ul>
      {findings.length > limit && <p className="muted">{findings.length - limit} more findings are in the exported report.</p>}
    </>
  );
}
