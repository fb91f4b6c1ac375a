import { useState } from 'react';
import type { Report, Signoff } from '../../app/core/model/report.ts';
import { Cautions } from '../components/Cautions.tsx';
import { VerdictBadge } from '../components/VerdictBadge.tsx';
import { downloadText, reportJson, signReport } from '../export/report-file.ts';
import { renderHtmlReport } from '../../app/report/html.ts';
import { withTimesInWords } from '../format.ts';

const DECISIONS: readonly { value: Signoff['decision']; words: string }[] = [
  { value: 'approve', words: 'Approve: the log supports the evaluation' },
  { value: 'approve-with-conditions', words: 'Approve with conditions (say which in the note)' },
  { value: 'reject', words: 'Reject: the log does not support the evaluation' },
];

function fileName(report: Report): string {
  return `counterweight-report-${report.run.started_at.slice(0, 19).replaceAll(':', '')}.json`;
}

export function SignoffPanel({ report, onSigned }: { report: Report; onSigned: (report: Report) => void }) {
  const [reviewer, setReviewer] = useState(report.signoff?.reviewer ?? '');
  const [decision, setDecision] = useState<Signoff['decision']>(report.signoff?.decision ?? (report.verdict === 'not-supported' ? 'reject' : 'approve-with-conditions'));
  const [note, setNote] = useState(report.signoff?.note ?? '');
  const [error, setError] = useState<string | null>(null);

  const sign = () => {
    if (!reviewer.trim()) { setError('Enter the reviewer\'s name: a sign-off records who made the judgement.'); return; }
    if (decision === 'approve-with-conditions' && !note.trim()) { setError('Say in the note which conditions apply.'); return; }
    setError(null);
    onSigned(signReport(report, { reviewer: reviewer.trim(), decision, note: note.trim() }));
  };

  return (
    <section className="screen" aria-labelledby="signoff-title">
      <h1 id="signoff-title">Sign-off: your decision on this log</h1>
      <p className="lead">The tool's verdict is <VerdictBadge verdict={report.verdict} compact />. The decision below is yours.</p>
      <form className="card signoff-form" onSubmit={(e) => { e.preventDefault(); sign(); }}>
        <label htmlFor="reviewer">Reviewer</label>
        <input id="reviewer" value={reviewer} onChange={(e) => setReviewer(e.target.value)} autoComplete="name" />
        <fieldset>
          <legend>Decision</legend>
          {DECISIONS.map((d) => (
            <div key={d.value}>
              <input type="radio" id={`decision-${d.value}`} name="decision" value={d.value} checked={decision === d.value} onChange={() => setDecision(d.value)} />
              <label htmlFor={`decision-${d.value}`}>{d.words}</label>
            </div>
          ))}
        </fieldset>
        <label htmlFor="note">Note</label>
        <textarea id="note" rows={4} value={note} onChange={(e) => setNote(e.target.value)} />
        {error && <p className="problems" role="alert">{error}</p>}
        <div className="actions">
          <button type="submit" className="button primary">Record the sign-off</button>
          <button type="button" className="button" onClick={() => downloadText(reportJson(report), fileName(report))}>{report.signoff ? 'Export signed report JSON' : 'Export report JSON'}</button>
          <button type="button" className="button" onClick={() => downloadText(renderHtmlReport(report), fileName(report).replace(/\.json$/, '.html'), 'text/html')}>Export HTML report</button>
        </div>
      </form>
      {report.signoff && (
        <div className="card" role="status">
          <h2>{report.signoff.signature ? 'Sign-off recorded and signed (Ed25519)' : 'Sign-off recorded (not cryptographically signed)'}</h2>
          <p>{report.signoff.reviewer} — <strong>{report.signoff.decision}</strong> at {withTimesInWords(report.signoff.signed_at)}</p>
          <p className="muted">Report digest (SHA-256 of the canonical report without the sign-off): <code className="digest">{report.signoff.digest}</code></p>
          <p className="muted">Recorded, not cryptographically signed: to add an Ed25519 signature, export the JSON and run <code>counterweight sign</code> with <code>--key</code>.</p>
        </div>
      )}
      <Cautions cautions={report.cautions} />
    </section>
  );
}
