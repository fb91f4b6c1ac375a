import { useEngine } from '../engine/EngineProvider.tsx';
import { STAGES, type Stage } from '../engine/status.ts';
import { timeLeftWords, type ProgressPoint } from '../../app/core/progress.ts';
import { counted } from '../../app/core/count-words.ts';

const STAGE_WORDS: Record<Stage, { title: string; what: string }> = {
  profile: { title: 'Profile', what: 'types, nulls and value ranges of the mapped columns' },
  cube: { title: 'Cube', what: 'one scan summing rows, weights and rewards by segment, action and time' },
  tails: { title: 'Tails', what: 'duplicated ids, the largest weights, example rows' },
  checks: { title: 'Checks', what: 'every check and the verdict, from the sums above' },
};

export function RunScreen({ onBack }: { onBack: () => void }) {
  const { status, cancel } = useEngine();
  const running = status.kind === 'running';
  return (
    <section aria-labelledby="run-title" className="screen">
      <h1 id="run-title">{running ? 'Auditing the log…' : status.kind === 'failed' ? 'The audit stopped' : 'Audit'}</h1>
      {running && <p className="lead">{status.source.label}: {counted(status.source.profile.rows, 'row')}. The page stays usable while the engine works.</p>}
      {running && <RunProgress point={status.point} />}
      <ol className="stages" aria-label="Audit stages">
        {STAGES.map((stage) => {
          const finished = running && status.finished.includes(stage);
          const current = running && !finished && status.stage === stage;
          const state = finished ? 'finished' : current ? 'working' : 'waiting';
          return (
            <li key={stage} className={`stage stage-${state}`}>
              <span className="stage-icon" aria-hidden="true">{finished ? '✓' : current ? <span className="spinner" /> : '○'}</span>
              <span className="stage-title">{STAGE_WORDS[stage].title}</span>
              <span className="stage-state">{finished ? 'done' : current ? 'working' : 'waiting'}</span>
              <span className="muted">{STAGE_WORDS[stage].what}</span>
            </li>
          );
        })}
      </ol>
      {running && <div className="actions"><button type="button" className="button" onClick={cancel}>Cancel the audit</button></div>}
      {status.kind === 'failed' && (
        <div className="problems" role="alert">
          <p><strong>What went wrong:</strong> {status.message}</p>
          <button type="button" className="button" onClick={onBack}>Back to settings</button>
        </div>
      )}
    </section>
  );
}

/** Stage k of n, the share of the log the running pass has read, the share of the audit done and the time left. */
function RunProgress({ point }: { point: ProgressPoint | undefined }) {
  const share = point ? Math.floor(point.share * 100) : 0;
  return (
    <div className="run-progress" data-testid="run-progress">
      <p className="run-progress-line">
        <strong>Stage {point ? point.stageIndex : 1} of {point ? point.stageCount : STAGES.length}</strong>
        {' · '}{STAGE_WORDS[point?.stage ?? 'profile'].title}
        {point?.logShare != null && <>{' · '}this pass has read {Math.floor(point.logShare * 100)}% of the log</>}
        {' · '}{share}% of the audit done
        {' · '}<span className="run-progress-left">{timeLeftWords(point?.secondsLeft ?? null)}</span>
      </p>
      <progress className="run-progress-bar" max={100} value={share} aria-label={`${share}% of the audit done`} />
    </div>
  );
}
