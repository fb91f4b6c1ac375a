import type { Report } from '../../app/core/model/report.ts';
import { useEngine } from '../engine/EngineProvider.tsx';
import { DesktopPicker, FilePicker, PathForm } from './log-pickers.tsx';
import type { RecentAudit } from '../state/recent.ts';
import { VerdictBadge } from '../components/VerdictBadge.tsx';
import { counted } from '../../app/core/count-words.ts';

const HOSTED_PICK_HINT = 'Parquet, CSV, TSV or NDJSON. The local engine finds a picked or dropped file by its name in the folders it was started with (its terminal lists them) and checks the size. It opens files in those folders only (by name below, too); for a file elsewhere, restart it with --logs FOLDER.';

interface Props {
  readonly recent: readonly RecentAudit[];
  readonly onShowReport: (report: Report) => void;
  readonly onForgetRecent: () => void;
  /** The log or audit still open: opening another log replaces it. */
  readonly current?: { readonly label: string; readonly onContinue: () => void } | null;
}

export function OpenScreen({ recent, onShowReport, onForgetRecent, current }: Props) {
  const { open, openDemo, status, traits, mode } = useEngine();
  const busy = status.kind === 'loading';

  return (
    <section aria-labelledby="open-title" className="screen">
      <h1 id="open-title">Open a decision log</h1>
      <p className="lead">
        Counterweight checks whether a log of logged decisions — actions, the propensity each was taken with,
        and the reward that followed — can support an off-policy estimate. Nothing leaves this computer.
      </p>

      {current && (
        <p className="notice" role="status">
          Still open: <strong>{current.label}</strong>. It stays until you open another log.{' '}
          <button type="button" className="button small" onClick={current.onContinue}>Back to it</button>
        </p>
      )}
      <div className="open-grid">
        {traits.opensBy === 'files' ? (
          <FilePicker busy={busy} onFiles={(files) => open({ kind: 'files', files })} />
        ) : mode.kind === 'desktop' ? (
          <DesktopPicker busy={busy} onPaths={(paths) => open({ kind: 'paths', paths })} />
        ) : (
          <div className="open-stack">
            <FilePicker busy={busy} onFiles={(files) => open({ kind: 'named', files })} hint={HOSTED_PICK_HINT} />
            <PathForm busy={busy} onPaths={(paths) => open({ kind: 'paths', paths })} />
          </div>
        )}

        <div className="card">
          <h2>Try it on the demo</h2>
          <p className="muted">
            Thirty days of home-screen promotions at Maple Row Market, an invented grocery-delivery app, with
            several logging problems planted on purpose.
          </p>
          <button type="button" className="button" disabled={busy} onClick={openDemo}>Open the demo log</button>
        </div>
      </div>

      {status.kind === 'loading' && <p role="status" className="notice"><span className="spinner" aria-hidden="true" /> {status.message}</p>}

      <section aria-labelledby="recent-title" className="recent">
        <h2 id="recent-title">Recent audits in this browser</h2>
        {recent.length === 0 ? (
          <p className="muted">None yet. Finished audits are listed here.</p>
        ) : (
          <>
            <ul className="recent-list">
              {recent.map((r) => (
                <li key={r.id}>
                  <VerdictBadge verdict={r.verdict} compact />
                  <span className="recent-label">{r.label}</span>
                  <span className="muted">{counted(r.rows, 'row')} · {new Date(r.at).toLocaleString('en-GB', { dateStyle: 'medium', timeStyle: 'short' })}</span>
                  {r.report ? (
                    <button type="button" className="button small" onClick={() => onShowReport(r.report as Report)}>View report</button>
                  ) : (
                    <span className="muted">report too large to keep</span>
                  )}
                </li>
              ))}
            </ul>
            <button type="button" className="button link" onClick={onForgetRecent}>Forget this list</button>
          </>
        )}
      </section>
    </section>
  );
}
