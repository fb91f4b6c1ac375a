import { useState } from 'react';
import { distinctText } from '../../app/core/roles/roles.ts';
import { StatusBadge } from '../components/StatusBadge.tsx';
import type { OpenedSource } from '../engine/status.ts';
import { reasonFor, reasonWords } from '../state/from-suggestions.ts';
import { REQUIRED_ROLES, ROLE_LABELS, roleProblems, SINGLE_ROLES, weakSuggestionProblems, type AuditDraft, type SingleRole } from '../state/draft.ts';
import { counted } from '../../app/core/count-words.ts';

interface Props {
  readonly source: OpenedSource;
  readonly draft: AuditDraft;
  readonly onChange: (draft: AuditDraft) => void;
  readonly onNext: () => void;
}

const RARE_ROLES: readonly SingleRole[] = ['target_propensity', 'propensity_vector', 'action_set_size'];

export function RolesScreen({ source, draft, onChange, onNext }: Props) {
  const problems = [...roleProblems(draft, source.profile, source.evidence), ...weakSuggestionProblems(draft, source.suggestions)];
  const blocking = problems.some((p) => p.severity === 'fail');
  // Open at first when a rare role is mapped, then only the person opens or closes it: a prop tied to the mapping
  // would close the section under the keyboard focus when its last select is set back to none.
  const [moreOpen, setMoreOpen] = useState(() => RARE_ROLES.some((r) => draft.roles[r]));
  const columns = source.profile.columns;
  const roleOf = new Map(SINGLE_ROLES.filter((r) => draft.roles[r]).map((r) => [draft.roles[r] as string, ROLE_LABELS[r].label.toLowerCase()]));
  const setRole = (role: SingleRole, column: string) => {
    const roles = { ...draft.roles };
    if (column) roles[role] = column; else delete roles[role];
    onChange({ ...draft, roles, segments: draft.segments.filter((c) => c !== column) });
  };
  const toggleSegment = (column: string, on: boolean) =>
    onChange({ ...draft, segments: on ? [...draft.segments, column] : draft.segments.filter((c) => c !== column) });

  const row = (role: SingleRole) => {
    const id = `role-${role}`;
    const chosen = draft.roles[role];
    return (
      <tr key={role}>
        <th scope="row">
          <label htmlFor={id}>{ROLE_LABELS[role].label}</label>
          {REQUIRED_ROLES.includes(role) ? <span className="required"> required</span> : null}
          <div className="help">{ROLE_LABELS[role].help}</div>
        </th>
        <td>
          <select id={id} value={chosen ?? ''} onChange={(e) => setRole(role, e.target.value)}>
            <option value="">— none —</option>
            {columns.map((c) => <option key={c.name} value={c.name}>{c.name} ({c.type})</option>)}
          </select>
        </td>
        <td className="reason">{chosen ? <Reason words={reasonWords(source.suggestions, role, chosen)} /> : ''}</td>
      </tr>
    );
  };
  const main = SINGLE_ROLES.filter((r) => !RARE_ROLES.includes(r));
  const free = columns.filter((c) => !roleOf.has(c.name));
  const used = columns.filter((c) => roleOf.has(c.name));

  return (
    <section aria-labelledby="roles-title" className="screen">
      <h1 id="roles-title">Which column is which?</h1>
      <p className="lead">
        {source.label}: {counted(source.profile.rows, 'row')}, {counted(columns.length, 'column')} ({source.format.toUpperCase()}).
        The choices below are suggestions from the column values (the action is the column whose values balance the propensities: {'(1/n) Σ 1{A=a}/p ≈ 1'} for every action) and, where values cannot decide, the names. Change any that are wrong.
      </p>

      <div className="roles-layout">
        <div>
          <table className="roles-table">
            <caption className="visually-hidden">Column roles</caption>
            <thead><tr><th scope="col">Role</th><th scope="col">Column</th><th scope="col">Why this column</th></tr></thead>
            <tbody>{main.map(row)}</tbody>
          </table>
          <details className="more-roles" open={moreOpen} onToggle={(e) => setMoreOpen(e.currentTarget.open)}>
            <summary>More roles, if your log has them</summary>
            <table className="roles-table"><tbody>{RARE_ROLES.map(row)}</tbody></table>
          </details>
        </div>

        <fieldset className="segments">
          <legend>Segment columns</legend>
          <p className="help">Every check is also broken down by these. A column with many values keeps its most frequent ones and puts the rest in “(other)”; the report says so.</p>
          <ul>
            {free.map((c) => {
              const id = `segment-${c.name}`;
              const suggested = reasonFor(source.suggestions, 'segments', c.name) !== null;
              return (
                <li key={c.name}>
                  <input id={id} type="checkbox" checked={draft.segments.includes(c.name)} onChange={(e) => toggleSegment(c.name, e.target.checked)} />
                  <label htmlFor={id}>
                    <strong>{c.name}</strong> <span className="muted">{distinctText(c)}</span>
                    {suggested && <span className="tag">suggested</span>}
                  </label>
                </li>
              );
            })}
          </ul>
          {used.length > 0 && <p className="help">Not offered, because they play a role: {used.map((c) => `${c.name} (${roleOf.get(c.name)})`).join(', ')}.</p>}
        </fieldset>
      </div>

      {problems.length > 0 && (
        <div className={blocking ? 'problems' : 'warnings'} role="alert">
          <p><strong>{blocking ? 'Before the audit can run:' : 'Worth a look before running:'}</strong></p>
          <ul>{problems.map((p) => <li key={p.message}><StatusBadge status={p.severity} /> {p.message}</li>)}</ul>
        </div>
      )}
      <div className="actions">
        <button type="button" className="button primary" disabled={blocking} onClick={onNext}>Next: targets and thresholds</button>
      </div>
    </section>
  );
}

/** A role's reason: one or two plain sentences, the evidence's formula text behind a disclosure. */
function Reason({ words }: { words: ReturnType<typeof reasonWords> }) {
  if (!words) return <>chosen by you</>;
  return (
    <>
      {words.plain}
      {words.detail && (
        <details className="reason-detail">
          <summary>How this was decided</summary>
          <p>{words.detail}</p>
        </details>
      )}
    </>
  );
}
