import { useState } from 'react';
import type { OpenedSource } from '../engine/status.ts';
import { knownActions, targetProblems, type AuditDraft, type TargetDraft } from '../state/draft.ts';
import { SettingsEditor, settingsProblem } from './SettingsEditor.tsx';

interface Props {
  readonly source: OpenedSource;
  readonly draft: AuditDraft;
  readonly onChange: (draft: AuditDraft) => void;
  readonly onRun: () => void;
}

function describeTarget(t: TargetDraft): string {
  if (t.spec === 'uniform') return 'Uniform: every action equally likely';
  if (t.spec.startsWith('always:')) return `Always choose “${t.spec.slice(7)}”`;
  if (t.spec.startsWith('table:')) return `Policy table from ${t.fileName ?? t.spec.slice(6)}`;
  if (t.spec.startsWith('column:')) return `Probabilities in column “${t.spec.slice(7)}”`;
  return t.spec;
}

export function TargetsScreen({ source, draft, onChange, onRun }: Props) {
  const [action, setAction] = useState('');
  const [columnName, setColumnName] = useState('');
  const [fileError, setFileError] = useState<string | null>(null);
  const add = (t: TargetDraft) => onChange({ ...draft, targets: [...draft.targets.filter((x) => x.spec !== t.spec), t] });
  const remove = (spec: string) => onChange({ ...draft, targets: draft.targets.filter((t) => t.spec !== spec) });
  const actions = knownActions(source.profile, source.evidence, draft);
  const problems = [...targetProblems(draft.targets, actions), ...[settingsProblem(draft.settings)].filter((p): p is string => p !== null)];

  const onTable = async (file: File | undefined) => {
    setFileError(null);
    if (!file) return;
    if (!/\.(csv|json)$/i.test(file.name)) { setFileError(`A policy table must be a .csv or .json file; ${file.name} is neither.`); return; }
    add({ spec: `table:${file.name}`, tableText: await file.text(), fileName: file.name });
  };

  return (
    <section aria-labelledby="targets-title" className="screen">
      <h1 id="targets-title">Target policies and settings</h1>
      <p className="lead">
        A target policy is the candidate you would like to evaluate from this log. With none listed, the audit
        still reports how well the log supports a uniform policy and each “always choose one action” policy.
      </p>

      <div className="card">
        <h2>Targets for this audit</h2>
        {draft.targets.length === 0 ? <p className="muted">None chosen: the built-in comparisons will be used.</p> : (
          <ul className="target-list">
            {draft.targets.map((t) => (
              <li key={t.spec}>
                <span>{describeTarget(t)}</span> <code>{t.spec}</code>
                <button type="button" className="button small" onClick={() => remove(t.spec)} aria-label={`Remove target ${t.spec}`}>Remove</button>
              </li>
            ))}
          </ul>
        )}
        <h3>Add a target</h3>
        <div className="target-add-grid">
          <span className="label">Uniform</span>
          <span><button type="button" className="button" onClick={() => add({ spec: 'uniform' })}>Add uniform</button> <span className="help">every action equally likely</span></span>

          <label className="label" htmlFor="always-action">Always one action</label>
          <span className="inline-form">
            {actions ? (
              <select id="always-action" value={action} onChange={(e) => setAction(e.target.value)}>
                <option value="">— choose an action of “{draft.roles.action}” —</option>
                {actions.values.map((a) => <option key={a} value={a}>{a}</option>)}
              </select>
            ) : (
              <input id="always-action" value={action} onChange={(e) => setAction(e.target.value)} placeholder="an action value of the log" />
            )}
            <button type="button" className="button" disabled={!action.trim()} onClick={() => { add({ spec: `always:${action.trim()}` }); setAction(''); }}>Add</button>
            {actions && !actions.complete && <span className="help">actions seen in the log’s first rows; the audit refuses an action the whole log lacks</span>}
          </span>

          <label className="label" htmlFor="target-table">Policy table file</label>
          <span className="inline-form">
            <input id="target-table" type="file" accept=".csv,.json" onChange={(e) => { void onTable(e.target.files?.[0]); e.target.value = ''; }} />
            <span className="help">.csv or .json: segment values, action, probability; probabilities sum to 1 within each segment</span>
          </span>

          <label className="label" htmlFor="target-column">Probabilities in a column</label>
          <span className="inline-form">
            <select id="target-column" value={columnName} onChange={(e) => setColumnName(e.target.value)}>
              <option value="">— choose a numeric column —</option>
              {source.profile.columns.filter((c) => c.kind === 'numeric').map((c) => <option key={c.name} value={c.name}>{c.name}</option>)}
            </select>
            <button type="button" className="button" disabled={!columnName} onClick={() => { add({ spec: `column:${columnName}` }); setColumnName(''); }}>Add</button>
          </span>
        </div>
        {fileError && <p className="problems" role="alert">{fileError}</p>}
      </div>

      <SettingsEditor settings={draft.settings} onChange={(settings) => onChange({ ...draft, settings })} />

      {problems.length > 0 && (
        <div className="problems" role="alert"><ul>{problems.map((p) => <li key={p}>{p}</li>)}</ul></div>
      )}
      <div className="actions">
        <button type="button" className="button primary" disabled={problems.length > 0} onClick={onRun}>Run the audit</button>
      </div>
    </section>
  );
}
