import type { CheckId, CheckResult } from '../../app/core/model/report.ts';
import type { RemedyKind } from '../../app/core/remedies/links.ts';
import { STATUS_STYLE } from '../palette.ts';

export type View =
  | { readonly screen: 'open' | 'roles' | 'targets' | 'run' | 'overview' | 'segments' | 'weights' | 'drift' | 'estimates' | 'edit' | 'signoff' | 'compare' | 'history' }
  | { readonly screen: 'check'; readonly id: CheckId }
  | { readonly screen: 'remedies'; readonly focus?: RemedyKind };

interface Props {
  readonly view: View;
  readonly onGo: (view: View) => void;
  readonly hasSource: boolean;
  readonly hasReport: boolean;
  readonly running: boolean;
  readonly checks: readonly CheckResult[];
}

const SETUP = [
  { screen: 'open', label: 'Open a log' },
  { screen: 'roles', label: 'Columns' },
  { screen: 'targets', label: 'Targets & thresholds' },
  { screen: 'run', label: 'Run' },
] as const;

const RESULTS = [
  { screen: 'overview', label: 'Overview' },
  { screen: 'segments', label: 'Segment map' },
  { screen: 'weights', label: 'Weights & support' },
  { screen: 'drift', label: 'Drift' },
  { screen: 'estimates', label: 'Estimates' },
  { screen: 'remedies', label: 'Remedies' },
  { screen: 'edit', label: 'Edit a target' },
  { screen: 'signoff', label: 'Sign-off' },
  { screen: 'compare', label: 'Compare' },
  { screen: 'history', label: 'History' },
] as const;

export function Nav({ view, onGo, hasSource, hasReport, running, checks }: Props) {
  // An open check is a step of its own under Overview: it is the one highlighted, not Overview.
  const current = view.screen;
  const openCheck = view.screen === 'check' ? checks.find((c) => c.id === view.id) : undefined;
  const counts = { fail: checks.filter((c) => c.status === 'fail').length, warn: checks.filter((c) => c.status === 'warn').length };
  const enabled = (screen: string) => {
    if (running) return screen === 'run';
    if (screen === 'open') return true;
    if (screen === 'roles' || screen === 'targets') return hasSource;
    if (screen === 'run') return false;
    // A history is read from saved reports: it needs no open log.
    if (screen === 'history') return true;
    return hasReport;
  };
  const item = (screen: View['screen'], label: string, index?: number) => (
    <li key={screen}>
      <button
        type="button"
        className={`nav-item${current === screen ? ' current' : ''}`}
        aria-current={current === screen ? 'page' : undefined}
        disabled={!enabled(screen)}
        onClick={() => onGo({ screen } as View)}
      >
        {index !== undefined && <span className="nav-step" aria-hidden="true">{index}</span>}
        {label}
        {screen === 'overview' && hasReport && (counts.fail > 0 || counts.warn > 0) && (
          <span className="nav-counts">
            {counts.fail > 0 && <span>{STATUS_STYLE.fail.icon} {counts.fail}<span className="visually-hidden"> failed</span></span>}
            {counts.warn > 0 && <span>{STATUS_STYLE.warn.icon} {counts.warn}<span className="visually-hidden"> warnings</span></span>}
          </span>
        )}
      </button>
      {screen === 'overview' && view.screen === 'check' && (
        <ul className="nav-sub">
          <li>
            <button type="button" className="nav-item current" aria-current="page" onClick={() => onGo(view)}>
              {openCheck?.title ?? view.id}
            </button>
          </li>
        </ul>
      )}
    </li>
  );
  return (
    <nav className="app-nav" aria-label="Steps and results">
      <p className="nav-heading">Set up</p>
      <ol>{SETUP.map((s, i) => item(s.screen, s.label, i + 1))}</ol>
      <p className="nav-heading">Results</p>
      <ul>{RESULTS.map((s) => item(s.screen, s.label))}</ul>
    </nav>
  );
}
