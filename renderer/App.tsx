import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import type { CheckId, Report } from '../app/core/model/report.ts';
import { useEngine } from './engine/EngineProvider.tsx';
import { sourceOf } from './engine/status.ts';
import { Nav, type View } from './components/Nav.tsx';
import { OpenScreen } from './screens/OpenScreen.tsx';
import { RolesScreen } from './screens/RolesScreen.tsx';
import { TargetsScreen } from './screens/TargetsScreen.tsx';
import { RunScreen } from './screens/RunScreen.tsx';
import { OverviewScreen } from './screens/OverviewScreen.tsx';
import { CheckScreen } from './screens/CheckScreen.tsx';
import { SegmentMap } from './panels/SegmentMap.tsx';
import { WeightsPanel } from './panels/WeightsPanel.tsx';
import { DriftPanel } from './panels/DriftPanel.tsx';
import { EstimatesPanel } from './panels/EstimatesPanel.tsx';
import { SignoffPanel } from './panels/SignoffPanel.tsx';
import { TargetEditor } from './screens/TargetEditor.tsx';
import { CompareScreen } from './screens/CompareScreen.tsx';
import { HistoryScreen } from './screens/HistoryScreen.tsx';
import { RemediesScreen } from './screens/RemediesScreen.tsx';
import type { RemedyKind } from '../app/core/remedies/links.ts';
import type { LabelledReport } from '../app/core/compare/history.ts';
import type { Baseline } from './state/comparison.ts';
import { draftFromSuggestions } from './state/from-suggestions.ts';
import { EMPTY_DRAFT, type AuditDraft } from './state/draft.ts';
import { forgetRecent, loadRecent, rememberAudit, type RecentAudit } from './state/recent.ts';
import { forgetCurrentAudit, loadCurrentAudit, saveCurrentAudit } from './state/current-audit.ts';

export function App() {
  const engine = useEngine();
  const { status } = engine;
  const [view, setViewState] = useState<View>({ screen: 'open' });
  const viewRef = useRef<View>(view);
  // The screen lives in the URL (#/overview, #/check/balance.weights), so back and forward move between screens.
  const setView = useCallback((next: View) => {
    if (hashOf(next) !== hashOf(viewRef.current)) window.history.pushState(null, '', hashOf(next));
    viewRef.current = next;
    setViewState(next);
  }, []);
  const showView = useCallback((next: View) => {
    viewRef.current = next;
    setViewState(next);
  }, []);
  const restoring = useRef<View | null>(null);
  const restoredLabel = useRef<string | null>(null);
  const [draft, setDraft] = useState<AuditDraft>(EMPTY_DRAFT);
  const [report, setReport] = useState<Report | null>(null);
  const [recent, setRecent] = useState<RecentAudit[]>(() => loadRecent());
  const [baseline, setBaseline] = useState<Baseline | null>(null);
  const [historyReports, setHistoryReports] = useState<LabelledReport[]>([]);
  const source = sourceOf(status);

  useEffect(() => {
    const onPop = () => {
      const next = viewOfHash(window.location.hash);
      if (next) showView(next);
    };
    window.addEventListener('popstate', onPop);
    // A reload on a results screen shows the audit that was on screen again, from the report this browser
    // kept (state/current-audit.ts), on the screen the URL names.
    const wanted = viewOfHash(window.location.hash);
    let cancelled = false;
    if (wanted && RESULT_SCREENS.has(wanted.screen)) {
      void loadCurrentAudit().then((kept) => {
        if (cancelled) return;
        if (kept) {
          restoring.current = wanted;
          restoredLabel.current = kept.label;
          engine.showReport(kept.report);
        } else {
          window.history.replaceState(null, '', hashOf({ screen: 'open' }));
        }
      });
    } else {
      window.history.replaceState(null, '', hashOf({ screen: 'open' }));
    }
    return () => { cancelled = true; window.removeEventListener('popstate', onPop); };
    // once, at start
  }, []);

  useEffect(() => {
    if (status.kind === 'ready' && view.screen === 'open') {
      // another log was opened: the previous audit gives way to it
      setReport(null);
      restoredLabel.current = null;
      void forgetCurrentAudit();
      setDraft(draftFromSuggestions(status.source.suggestions));
      setView({ screen: 'roles' });
    } else if (status.kind === 'running') {
      setView({ screen: 'run' });
    } else if (status.kind === 'done') {
      setReport(status.report);
      if (status.source) setRecent(rememberAudit(status.source.label, status.report));
      if (status.source) restoredLabel.current = null;
      void saveCurrentAudit({ label: labelOf(status.source?.label ?? restoredLabel.current, status.report), report: status.report });
      const restored = restoring.current;
      restoring.current = null;
      if (restored) showView(restored); else setView({ screen: 'overview' });
    } else if (status.kind === 'ready' && view.screen === 'run') {
      setView({ screen: 'targets' });
    }
    // Screens follow engine transitions only; a view change alone must not re-run this.
  }, [status]);

  const onSigned = useCallback((signed: Report) => {
    setReport(signed);
    void saveCurrentAudit({ label: labelOf(source?.label ?? restoredLabel.current, signed), report: signed });
  }, [source]);
  const openCheck = useCallback((id: CheckId) => setView({ screen: 'check', id }), []);
  const openRemedies = useCallback((focus: RemedyKind) => setView({ screen: 'remedies', focus }), []);
  const workspace = status.kind === 'done' ? status.workspace : undefined;
  const planWorkspace = useMemo(() => (workspace ? { cells: workspace.cells, targets: workspace.targets, logColumns: workspace.profile.columns.map((c) => c.name) } : undefined), [workspace]);
  // Going back to "Open a log" keeps the current audit: it is replaced only when another log is opened.
  const go = useCallback((next: View) => setView(next), [setView]);

  const main = (() => {
    switch (view.screen) {
      case 'open':
        return (
          <OpenScreen
            recent={recent}
            onShowReport={(r) => { restoredLabel.current = null; engine.showReport(r); }}
            onForgetRecent={() => { forgetRecent(); setRecent([]); }}
            current={report ? { label: labelOf(source?.label ?? restoredLabel.current, report), onContinue: () => setView({ screen: 'overview' }) } : source ? { label: source.label, onContinue: () => setView({ screen: 'roles' }) } : null}
          />
        );
      case 'roles':
        return source ? <RolesScreen source={source} draft={draft} onChange={setDraft} onNext={() => setView({ screen: 'targets' })} /> : null;
      case 'targets':
        return source ? <TargetsScreen source={source} draft={draft} onChange={setDraft} onRun={() => engine.run(draft)} /> : null;
      case 'run':
        return <RunScreen onBack={() => setView({ screen: 'targets' })} />;
      case 'history':
        return <HistoryScreen reports={historyReports} onReports={setHistoryReports} recent={recent} current={report ? { label: `${labelOf(source?.label ?? restoredLabel.current, report)} (open audit)`, report } : null} />;
      default:
        break;
    }
    if (!report) return null;
    switch (view.screen) {
      case 'overview': return <OverviewScreen report={report} onOpenCheck={openCheck} onCompare={() => setView({ screen: 'compare' })} onRemedies={openRemedies} />;
      case 'check': {
        const check = report.checks.find((c) => c.id === view.id);
        return check ? <CheckScreen check={check} settings={report.settings} onBack={() => setView({ screen: 'overview' })} onRemedies={report.remedies ? openRemedies : undefined} /> : null;
      }
      case 'remedies': return <RemediesScreen report={report} workspace={planWorkspace} focus={view.focus} />;
      case 'segments': return <SegmentMap report={report} workspace={status.kind === 'done' ? status.workspace : undefined} />;
      case 'weights': return <WeightsPanel report={report} onOpenCheck={openCheck} />;
      case 'drift': return <DriftPanel report={report} onOpenCheck={openCheck} />;
      case 'estimates': return <EstimatesPanel report={report} onOpenCheck={openCheck} />;
      case 'edit':
        return (
          <TargetEditor
            report={report}
            workspace={status.kind === 'done' ? status.workspace : undefined}
            onUseTable={(t) => { setDraft((d) => ({ ...d, targets: [...d.targets.filter((x) => x.spec !== t.spec), t] })); setView({ screen: 'targets' }); }}
          />
        );
      case 'signoff': return <SignoffPanel report={report} onSigned={onSigned} />;
      case 'compare': return <CompareScreen report={report} baseline={baseline} recent={recent} onBaseline={setBaseline} onOpenCheck={openCheck} />;
    }
  })();

  return (
    <div className="app">
      <header className="app-header">
        <a className="skip-link" href="#main">Skip to content</a>
        <span className="brand"><Logo /> Counterweight</span>
        <span className="tagline">decision-log audit before off-policy evaluation</span>
        <span className="engine-mode">{engine.traits.description}</span>
      </header>
      <Nav view={view} onGo={go} hasSource={source !== null} hasReport={report !== null} running={status.kind === 'running'} checks={report?.checks ?? []} />
      <main id="main" tabIndex={-1}>
        {status.kind === 'failed' && view.screen !== 'run' && (
          <div className="problems" role="alert"><strong>{status.source ? 'The audit could not finish.' : 'This log could not be opened.'}</strong> {status.message}</div>
        )}
        {main}
      </main>
    </div>
  );
}

const RESULT_SCREENS: ReadonlySet<string> = new Set(['overview', 'segments', 'weights', 'drift', 'estimates', 'remedies', 'edit', 'signoff', 'compare', 'check']);

/** What the audit is called on the Open screen: the log's label, or its files' names. */
function labelOf(label: string | null, report: Report): string {
  return label ?? report.input.files.map((f) => f.path.split(/[\\/]/).pop()).join(', ');
}
const ALL_SCREENS: ReadonlySet<string> = new Set(['open', 'roles', 'targets', 'run', 'history', ...RESULT_SCREENS]);

function hashOf(view: View): string {
  return view.screen === 'check' ? `#/check/${view.id}` : `#/${view.screen}`;
}

function viewOfHash(hash: string): View | null {
  const m = /^#\/([a-z]+)(?:\/([a-z.]+))?$/.exec(hash);
  if (!m || !ALL_SCREENS.has(m[1] as string)) return null;
  if (m[1] === 'check') return m[2] ? { screen: 'check', id: m[2] as CheckId } : null;
  return { screen: m[1] } as View;
}

function Logo() {
  return (
    <svg width="26" height="26" viewBox="0 0 26 26" aria-hidden="true" focusable="false">
      <line x1="13" y1="3" x2="13" y2="23" stroke="currentColor" strokeWidth="2" />
      <line x1="3" y1="9" x2="23" y2="7" stroke="currentColor" strokeWidth="2" />
      <circle cx="5" cy="15" r="3.5" fill="#E69F00" />
      <rect x="17" y="10" width="6" height="6" fill="#0072B2" />
      <line x1="8" y1="23" x2="18" y2="23" stroke="currentColor" strokeWidth="2" />
    </svg>
  );
}
