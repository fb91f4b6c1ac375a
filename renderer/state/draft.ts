/** What the user has chosen for the next audit: roles, target policies, settings overrides. */
import { REQUIRED_ROLES, resolveRoles, SINGLE_ROLES, validateRoles, type RoleEvidence, type SingleRole } from '../../app/core/roles/roles.ts';
import type { Profile } from '../../app/core/scan/profile.ts';

export { REQUIRED_ROLES, SINGLE_ROLES, type SingleRole };

export const ROLE_LABELS: Record<SingleRole, { label: string; help: string }> = {
  decision_id: { label: 'Decision id', help: 'One value per logged decision; used to find retried writes.' },
  time: { label: 'Time', help: 'When the decision was made; used for coverage and drift over time.' },
  action: { label: 'Action', help: 'What the logging policy chose.' },
  propensity: { label: 'Propensity', help: 'Probability with which the logging policy chose the logged action.' },
  reward: { label: 'Reward', help: 'The outcome observed after the decision.' },
  policy_version: { label: 'Policy version', help: 'Which version of the logging policy was live.' },
  target_propensity: { label: 'Target propensity', help: 'A candidate policy\'s probability of the logged action, if you computed it.' },
  propensity_vector: { label: 'Propensity vector', help: 'The full logging distribution as a list column.' },
  action_set_size: { label: 'Action set size', help: 'How many actions were eligible for this decision.' },
};

export interface TargetDraft {
  readonly spec: string;
  readonly tableText?: string;
  /** For a table target: the file name the text came from. */
  readonly fileName?: string;
}

export interface AuditDraft {
  readonly roles: Partial<Record<SingleRole, string>>;
  readonly segments: readonly string[];
  readonly targets: readonly TargetDraft[];
  readonly settings: Readonly<Record<string, number | string | boolean>>;
}

export const EMPTY_DRAFT: AuditDraft = { roles: {}, segments: [], targets: [], settings: {} };

function missingRequiredRoles(draft: AuditDraft): SingleRole[] {
  return REQUIRED_ROLES.filter((r) => !draft.roles[r]);
}

export interface DraftProblem {
  readonly severity: 'fail' | 'warn';
  readonly message: string;
}

/** Problems with a mapping: ours in plain words for missing or reused columns, then the core's type checks. */
export function roleProblems(draft: AuditDraft, profile: Profile, evidence?: RoleEvidence): DraftProblem[] {
  const own = basicRoleProblems(draft).map((message) => ({ severity: 'fail' as const, message }));
  if (own.length > 0) return own;
  try {
    const resolved = resolveRoles(profile, { ...draft.roles, segments: draft.segments }, evidence);
    // The core fills an unmapped role from its suggestion, so "none" cannot switch a suggested role off.
    const refilled = SINGLE_ROLES.filter((r) => !draft.roles[r] && resolved[r]).map((r) => ({
      severity: 'warn' as const,
      message: `${ROLE_LABELS[r].label} is set to none, but the audit will still use the suggested column "${resolved[r]}".`,
    }));
    return [...refilled, ...validateRoles(profile, resolved, evidence).map((p) => ({ severity: p.severity, message: p.message }))];
  } catch (error) {
    return [{ severity: 'fail', message: error instanceof Error ? error.message : String(error) }];
  }
}

function basicRoleProblems(draft: AuditDraft): string[] {
  const problems = missingRequiredRoles(draft).map((r) => `Choose a column for ${ROLE_LABELS[r].label.toLowerCase()}: the audit cannot run without it.`);
  const used = new Map<string, string[]>();
  for (const role of SINGLE_ROLES) {
    const col = draft.roles[role];
    if (col) used.set(col, [...(used.get(col) ?? []), ROLE_LABELS[role].label.toLowerCase()]);
  }
  for (const [col, roles] of used) if (roles.length > 1) problems.push(`Column "${col}" is used for ${roles.join(' and ')}; each column can play one role.`);
  for (const seg of draft.segments) {
    const role = [...used.entries()].find(([c]) => c === seg)?.[1];
    if (role) problems.push(`Column "${seg}" is both a segment and the ${role.join(', ')} column.`);
  }
  return problems;
}

/** The action values the Targets screen offers: from the role evidence over the log's first rows, for the mapped action column. */
export interface KnownActions {
  readonly values: readonly string[];
  /** every value of the column is listed (its whole-log distinct count equals the list's length) */
  readonly complete: boolean;
}

export function knownActions(profile: Profile, evidence: RoleEvidence | undefined, draft: AuditDraft): KnownActions | null {
  const column = draft.roles.action;
  if (!column || !evidence) return null;
  const fit = evidence.fits.find((f) => f.column === column);
  if (!fit) return null;
  const values = fit.values.map((v) => v.value).filter((v): v is string => v !== null).sort();
  const c = profile.columns.find((x) => x.name === column);
  return { values, complete: !!c && c.distinctBasis === 'all rows' && Math.round(c.distinct) === values.length };
}

export function targetProblems(targets: readonly TargetDraft[], actions?: KnownActions | null): string[] {
  const problems: string[] = [];
  if (actions?.complete) {
    const unknown = targets.filter((t) => t.spec.startsWith('always:') && t.spec.length > 7 && !actions.values.includes(t.spec.slice(7)));
    if (unknown.length > 0) problems.push(`The log has no action ${unknown.map((t) => `“${t.spec.slice(7)}”`).join(', ')}; its actions are ${actions.values.map((a) => `“${a}”`).join(', ')}. Remove the target or choose another action.`);
  }
  const seen = new Set<string>();
  for (const t of targets) {
    if (seen.has(t.spec)) problems.push(`The target ${t.spec} is listed twice.`);
    seen.add(t.spec);
    if (t.spec === 'always:') problems.push('An "always" target needs an action.');
    if (t.spec.startsWith('table:') && !t.tableText) problems.push(`The table target ${t.spec} has no file contents.`);
    if (t.spec === 'column:') problems.push('A column target needs a column.');
  }
  return problems;
}

/** Confidence below which a suggestion is shown as weak evidence on the Columns screen. */
const WEAK_CONFIDENCE = 0.5;

/** Roles still mapped to a suggestion whose evidence is weak: the person should look before running. */
export function weakSuggestionProblems(draft: AuditDraft, suggestions: readonly { role: string; column: string; reason: string; confidence: number }[]): DraftProblem[] {
  return SINGLE_ROLES.flatMap((role) => {
    const s = suggestions.find((x) => x.role === role && x.column === draft.roles[role]);
    return s && s.confidence < WEAK_CONFIDENCE ? [{ severity: 'warn' as const, message: `${ROLE_LABELS[role].label} "${s.column}" is a guess on weak evidence (${s.reason}). Check it.` }] : [];
  });
}
