/**
 * Column roles (README.md, "What the audit checks"): suggestion from names, types and value profiles, explicit overrides,
 * and validation with specific messages.
 */
import { PREFIX_ROWS, type ColumnProfile, type Profile } from '../scan/profile.ts';
import { contradicts, fitText, ID_REFUSE_SHARE, ID_SUGGEST_SHARE, uniqueness, type BalanceFit, type RoleEvidence } from './evidence.ts';
import { countText } from '../count-words.ts';

export type { RoleEvidence } from './evidence.ts';

export const SINGLE_ROLES = ['decision_id', 'time', 'action', 'propensity', 'reward', 'policy_version', 'target_propensity', 'propensity_vector', 'action_set_size'] as const;
export type SingleRole = (typeof SINGLE_ROLES)[number];
export type RoleName = SingleRole | 'segments';
export const REQUIRED_ROLES: readonly SingleRole[] = ['action', 'propensity', 'reward'];

/** A column name maps a role; null says "this log has no such column" (no suggestion is used). */
export interface RoleOverrides {
  readonly decision_id?: string | null;
  readonly time?: string | null;
  readonly action?: string | null;
  readonly propensity?: string | null;
  readonly reward?: string | null;
  readonly policy_version?: string | null;
  readonly target_propensity?: string | null;
  readonly propensity_vector?: string | null;
  readonly action_set_size?: string | null;
  readonly segments?: readonly string[];
}

export interface RoleSuggestion {
  readonly role: RoleName;
  readonly column: string;
  readonly reason: string;
  /**
   * The reason in one or two plain sentences with its numbers, where `reason` is formula text (the action's
   * weight-balance evidence); the app shows this and keeps `reason` behind a disclosure.
   */
  readonly plain?: string;
  /** 0..1: how sure the suggestion is (name and values agree: high; values only: medium). */
  readonly confidence: number;
}

export type TimeEncoding = 'timestamp' | 'text' | 'epoch_s' | 'epoch_ms' | 'epoch_us';

export interface ResolvedRoles {
  readonly decision_id: string | null;
  readonly time: string | null;
  readonly timeEncoding: TimeEncoding | null;
  readonly action: string | null;
  readonly propensity: string | null;
  readonly reward: string | null;
  readonly policy_version: string | null;
  readonly target_propensity: string | null;
  readonly propensity_vector: string | null;
  readonly action_set_size: string | null;
  readonly segments: readonly string[];
  readonly reasons: Readonly<Record<string, string>>;
}

export interface RoleProblem {
  readonly role: RoleName;
  readonly severity: 'fail' | 'warn';
  readonly message: string;
}

const NAME_HINTS: Record<SingleRole, RegExp> = {
  decision_id: /(^|_)(decision|event|request|impression|row|log)?_?(id|uuid|key)$/i,
  time: /(^|_)(time|timestamp|ts|date|datetime|logged_at|created_at|at)$|_at$|time/i,
  action: /(^|_)(action|arm|promotion|promo|item|choice|treatment|variant|offer|slot_item|banner|chosen)s?($|_)/i,
  propensity: /(^|_)(propensity|propensities|prob|probability|pscore|p_log|logging_p|logging_prob|p)($|_)/i,
  reward: /(^|_)(reward|click|clicked|ordered|order|conversion|converted|purchase|purchased|outcome|label|y|revenue|value|basket_value)($|_)/i,
  policy_version: /(^|_)(policy|policy_version|model_version|version)($|_)/i,
  target_propensity: /(^|_)target_?(propensity|prob|probability)($|_)/i,
  propensity_vector: /(propensit|prob).*(vector|list|dist)|(vector|list|dist).*(propensit|prob)/i,
  action_set_size: /(^|_)(action_set_size|n_actions|num_actions|n_arms|num_arms|candidates)($|_)/i,
};

const EPOCH_S = [1e8, 1e10];
const EPOCH_MS = [1e11, 1e13];
const EPOCH_US = [1e14, 1e16];

function inRange(x: number | null, [lo, hi]: number[]): boolean {
  return x !== null && x >= (lo as number) && x < (hi as number);
}

function timeEncodingOf(c: ColumnProfile): TimeEncoding | null {
  if (c.kind === 'temporal') return 'timestamp';
  if (c.kind === 'text') return c.nonNull > 0 && c.parsedAsTime >= 0.5 * c.nonNull ? 'text' : null;
  if (c.kind === 'numeric' && c.nonInteger === 0) {
    if (inRange(c.min, EPOCH_S) && inRange(c.max, EPOCH_S)) return 'epoch_s';
    if (inRange(c.min, EPOCH_MS) && inRange(c.max, EPOCH_MS)) return 'epoch_ms';
    if (inRange(c.min, EPOCH_US) && inRange(c.max, EPOCH_US)) return 'epoch_us';
  }
  return null;
}

const pct = (x: number) => `${(100 * x).toFixed(x < 0.001 && x > 0 ? 3 : 1)}%`;

/** Share of a text column's values that are not numbers, in words that say which rows were looked at. */
function notNumbersText(c: ColumnProfile): string {
  if (c.parseBasis === 'first rows') return `none of its first ${PREFIX_ROWS.toLocaleString('en')} values parses as a number`;
  return `${pct(1 - c.parsedAsNumber / Math.max(1, c.nonNull))} of values do not parse as numbers`;
}

/** "6 distinct values", or where only the first rows were counted, "over 10,000 distinct values in the first 100,000 rows". */
export function distinctText(c: ColumnProfile): string {
  const n = Math.round(c.distinct).toLocaleString('en');
  if (c.distinctBasis === 'all rows') return `${n} distinct value${c.distinct === 1 ? '' : 's'}`;
  return `${n} distinct values in the first ${c.distinctRows.toLocaleString('en')} rows`;
}

function isProbabilityLike(c: ColumnProfile): boolean {
  return (c.kind === 'numeric' || (c.kind === 'text' && c.parsedAsNumber > 0.9 * c.nonNull)) && c.min !== null && c.max !== null && c.min >= 0 && c.max <= 1 && c.nonBinary > 0;
}

type Candidate = RoleSuggestion;

function candidatesFor(role: SingleRole, c: ColumnProfile, rows: number): Candidate | null {
  const named = NAME_HINTS[role].test(c.name);
  switch (role) {
    case 'propensity': {
      if (/target/i.test(c.name)) return null;
      if (!isProbabilityLike(c)) return named && c.kind === 'numeric' ? { role, column: c.name, reason: `named like a propensity but values span [${c.min}, ${c.max}]`, confidence: 0.3 } : null;
      return named
        ? { role, column: c.name, reason: `named like a probability; ${c.type} values within [${c.min}, ${c.max}]`, confidence: 0.95 }
        : { role, column: c.name, reason: `${c.type} values within [${c.min}, ${c.max}], like a probability`, confidence: 0.5 };
    }
    case 'target_propensity':
      return named && isProbabilityLike(c) ? { role, column: c.name, reason: 'named like a target policy probability', confidence: 0.8 } : null;
    case 'action': {
      if (c.kind !== 'text' && !(c.kind === 'numeric' && c.nonInteger === 0)) return null;
      if (c.distinct < 2 || c.distinct > 1000) return null;
      if (named) return { role, column: c.name, reason: `named like an action; ${distinctText(c)}`, confidence: 0.9 };
      return null;
    }
    case 'reward': {
      if (c.kind !== 'numeric' && c.kind !== 'boolean') return null;
      if (/prop|prob|id$|size|count|version/i.test(c.name)) return null;
      const binary = c.kind === 'boolean' || (c.nonBinary === 0 && c.nonNull > 0);
      if (named && binary) return { role, column: c.name, reason: 'named like a reward; values are 0/1', confidence: 0.95 };
      if (named) return { role, column: c.name, reason: `named like a reward; numeric values within [${c.min}, ${c.max}]`, confidence: 0.7 };
      if (binary) return { role, column: c.name, reason: 'values are 0/1', confidence: 0.4 };
      return null;
    }
    case 'decision_id': {
      if (c.kind !== 'text' && !(c.kind === 'numeric' && c.nonInteger === 0) && c.kind !== 'other') return null;
      if (rows === 0 || c.distinctRows === 0) return null;
      const u = uniqueness(c);
      // an identifier must be nearly unique, whatever its name; an unnamed integer column must be unique to the row
      if (u.share < ID_SUGGEST_SHARE) return null;
      if (named) return { role, column: c.name, reason: `${u.text}; named like an identifier`, confidence: 0.95 };
      if (c.kind === 'numeric' && u.share < 0.99) return null;
      return { role, column: c.name, reason: `${u.text}, nearly one per row`, confidence: c.kind === 'text' ? 0.8 : 0.6 };
    }
    case 'time': {
      const enc = timeEncodingOf(c);
      if (!enc) return null;
      if (enc === 'timestamp') return { role, column: c.name, reason: `${c.type} column`, confidence: named ? 0.95 : 0.8 };
      if (enc === 'text') return named ? { role, column: c.name, reason: `text that parses as timestamps (${pct(c.parsedAsTime / Math.max(1, c.nonNull))})`, confidence: 0.7 } : null;
      return named ? { role, column: c.name, reason: `integers in the range of Unix ${enc === 'epoch_s' ? 'seconds' : enc === 'epoch_ms' ? 'milliseconds' : 'microseconds'}`, confidence: 0.7 } : null;
    }
    case 'policy_version':
      return named && c.kind !== 'numeric' && c.distinct >= 1 && c.distinct <= 100 ? { role, column: c.name, reason: `named like a policy version; ${distinctText(c)}`, confidence: 0.8 } : null;
    case 'propensity_vector':
      return named && /\[\]$|^LIST|^[A-Z]+\[\d*\]$/i.test(c.type) ? { role, column: c.name, reason: 'list column named like a probability vector', confidence: 0.8 } : null;
    case 'action_set_size':
      return named && c.kind === 'numeric' && c.nonInteger === 0 ? { role, column: c.name, reason: 'integer column named like an action-set size', confidence: 0.7 } : null;
  }
}

const isNamedAction = (column: string) => NAME_HINTS.action.test(column);

/**
 * A balance fit in plain words, without fitText's formula: each action value a, its rows weighted by 1/p, adds up
 * to the number of rows n ((1/n) Σ 1{A=a}/p = 1). With `after`, the words that follow a column's name.
 */
function fitPlain(f: BalanceFit, after = false): string {
  const lead = after ? '' : 'Weighted by 1/propensity, ';
  if (f.tooManyValues) return after ? 'has too many values to be an action.' : 'It has too many values to be an action.';
  if (!Number.isFinite(f.maxDeviation)) return after ? 'has too few rows with a valid propensity to tell.' : 'Too few rows have a valid propensity to tell.';
  if (f.holds) {
    const values = f.values.length === 1 ? 'its one value' : `each of its ${countText(f.values.length)} values`;
    const within = `within ${countText(Math.max(1, Math.round(f.maxDeviation * 100)))}%`;
    return after ? `balances too (${within}).` : `${lead}${values} adds up to the number of rows (${within}), as an action's values must.`;
  }
  const value = f.worst ? (f.worst.value === null ? 'empty' : `'${f.worst.value.length > 24 ? `${f.worst.value.slice(0, 23)}…` : f.worst.value}'`) : 'one value';
  const times = f.worst ? `${f.worst.b.toFixed(2)} times` : 'far from';
  return after ? `does not: its value ${value} adds up to ${times} the number of rows.` : `${lead}its value ${value} adds up to ${times} the number of rows, not once.`;
}

/**
 * The action from the weight-balance evidence: the candidate for which the identity holds, names breaking
 * ties; where it holds for no column, the column named like an action, with the evidence against it.
 */
function actionFromEvidence(profile: Profile, evidence: RoleEvidence, propensity: string | undefined, taken: ReadonlySet<string>): RoleSuggestion | null {
  if (!propensity) return null;
  const fits = evidence.fits.filter((f) => f.propensity === propensity && !taken.has(f.column));
  if (fits.length === 0) return null;
  const byFit = (a: BalanceFit, b: BalanceFit) => a.maxDeviation - b.maxDeviation;
  const holding = fits.filter((f) => f.holds).sort((a, b) => Number(isNamedAction(b.column)) - Number(isNamedAction(a.column)) || byFit(a, b));
  const others = fits.filter((f) => !f.holds).sort(byFit);
  const distinct = (col: string) => {
    const c = profile.columns.find((x) => x.name === col);
    return c ? `; ${distinctText(c)}` : '';
  };
  const best = holding[0];
  if (best) {
    const named = isNamedAction(best.column) ? '; named like an action' : '';
    const rest = holding.slice(1);
    if (rest.length === 0) {
      const next = others[0];
      return { role: 'action', column: best.column, reason: `weight balance holds: ${fitText(best)}${named}${distinct(best.column)}${next ? `; next closest '${next.column}': ${fitText(next)}` : ''}`, plain: fitPlain(best), confidence: 0.95 };
    }
    const also = rest.map((f) => `'${f.column}'`).join(', ');
    const tieBroken = isNamedAction(best.column) && !rest.some((f) => isNamedAction(f.column));
    return {
      role: 'action',
      column: best.column,
      reason: `weight balance holds: ${fitText(best)}${named}${distinct(best.column)}; it also holds for ${also}, so the evidence is weak${tieBroken ? ' (the name decided)' : ' (the closest fit decided)'}`,
      plain: `${fitPlain(best)} It also holds for ${also}, so the evidence is weak: ${tieBroken ? 'the column name decided' : 'the closest fit decided'}.`,
      confidence: tieBroken ? 0.7 : 0.45,
    };
  }
  // balance holds for no column: the evidence speaks against the named column, or cannot pick one
  const named = others.find((f) => isNamedAction(f.column));
  if (!named) return null;
  return {
    role: 'action',
    column: named.column,
    reason: `named like an action, but weight balance does not hold for it (${fitText(named)}) nor for any other column; check the action and propensity columns`,
    plain: `Named like an action, but weight balance holds for no column. ${fitPlain(named)} Check the action and propensity columns.`,
    confidence: 0.35,
  };
}

/**
 * Suggested roles, best candidate per role, each column used at most once; then segment columns. With
 * evidence (gatherRoleEvidence), the action is the column for which weight balance holds, and a
 * propensity column that balances some action column is preferred.
 */
export function suggestRoles(profile: Profile, evidence?: RoleEvidence): RoleSuggestion[] {
  const taken = new Set<string>();
  const out: RoleSuggestion[] = [];
  const order: SingleRole[] = ['propensity', 'target_propensity', 'time', 'decision_id', 'action', 'reward', 'policy_version', 'propensity_vector', 'action_set_size'];
  const balances = (p: string) => !!evidence?.fits.some((f) => f.propensity === p && f.holds);
  for (const role of order) {
    if (role === 'action' && evidence && evidence.fits.length > 0) {
      const s = actionFromEvidence(profile, evidence, out.find((x) => x.role === 'propensity')?.column, taken);
      if (s) {
        out.push(s);
        taken.add(s.column);
        continue;
      }
    }
    const cands = profile.columns
      .filter((c) => !taken.has(c.name))
      .map((c) => candidatesFor(role, c, profile.rows))
      .filter((c): c is Candidate => c !== null)
      .map((c) => (role === 'propensity' && balances(c.column) ? { ...c, reason: `${c.reason}; weight balance holds for an action column with it`, confidence: Math.min(1, c.confidence + 0.3) } : c))
      .sort((a, b) => b.confidence - a.confidence);
    const best = cands[0];
    if (best) {
      out.push(best);
      taken.add(best.column);
    }
  }
  if (!out.some((s) => s.role === 'action')) {
    const fallback = profile.columns
      .filter((c) => !taken.has(c.name) && c.kind === 'text' && c.distinct >= 2 && c.distinct <= 100)
      .sort((a, b) => a.distinct - b.distinct)
      .pop();
    if (fallback) {
      out.push({ role: 'action', column: fallback.name, reason: `text column with ${distinctText(fallback)} (no column is named like an action, and no weight-balance evidence was read)`, confidence: 0.2 });
      taken.add(fallback.name);
    }
  }
  for (const c of profile.columns) {
    if (taken.has(c.name)) continue;
    const categorical = c.kind === 'text' || c.kind === 'boolean' || (c.kind === 'numeric' && c.nonInteger === 0 && c.distinct <= 50);
    if (categorical && c.distinct >= 2 && c.distinct <= 1000 && c.distinct < 0.5 * Math.max(1, c.distinctRows)) {
      out.push({ role: 'segments', column: c.name, reason: `categorical ${c.type} with ${distinctText(c)}`, confidence: c.distinct <= 50 ? 0.7 : 0.4 });
    }
  }
  return out;
}

export class RoleError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'RoleError';
  }
}

/** Overrides always win; otherwise the suggestion. Unknown columns in overrides are errors. */
export function resolveRoles(profile: Profile, overrides: RoleOverrides = {}, evidence?: RoleEvidence): ResolvedRoles {
  const names = new Set(profile.columns.map((c) => c.name));
  const check = (role: string, col: string) => {
    if (!names.has(col)) throw new RoleError(`role ${role}: column "${col}" does not exist; columns are ${profile.columns.map((c) => `"${c.name}"`).join(', ')}`);
  };
  const suggestions = suggestRoles(profile, evidence);
  const reasons: Record<string, string> = {};
  const single: Record<string, string | null> = {};
  const overridden = new Set<string>();
  for (const role of SINGLE_ROLES) {
    const o = overrides[role];
    if (o === null) {
      single[role] = null;
      reasons[role] = 'override: none';
    } else if (o !== undefined && o !== '') {
      check(role, o);
      single[role] = o;
      reasons[role] = 'override';
      overridden.add(o);
    }
  }
  for (const role of SINGLE_ROLES) {
    if (single[role] !== undefined) continue;
    const s = suggestions.find((x) => x.role === role && !overridden.has(x.column));
    single[role] = s ? s.column : null;
    if (s) reasons[role] = s.reason;
  }
  let segments: string[];
  if (overrides.segments) {
    overrides.segments.forEach((c) => check('segments', c));
    segments = [...overrides.segments];
    reasons.segments = 'override';
  } else {
    const used = new Set(Object.values(single).filter((x): x is string => x !== null));
    segments = suggestions.filter((s) => s.role === 'segments' && !used.has(s.column)).map((s) => s.column);
    reasons.segments = segments.length ? 'categorical columns not used by another role' : 'no categorical columns found';
  }
  const timeCol = single.time ?? null;
  const timeProfile = timeCol ? profile.columns.find((c) => c.name === timeCol) : undefined;
  return {
    decision_id: single.decision_id ?? null,
    time: timeCol,
    timeEncoding: timeProfile ? timeEncodingOf(timeProfile) : null,
    action: single.action ?? null,
    propensity: single.propensity ?? null,
    reward: single.reward ?? null,
    policy_version: single.policy_version ?? null,
    target_propensity: single.target_propensity ?? null,
    propensity_vector: single.propensity_vector ?? null,
    action_set_size: single.action_set_size ?? null,
    segments,
    reasons,
  };
}

/** Why a column named like a required role was not suggested for it, or null if its name does not fit. */
function whyNotTaken(role: SingleRole, c: ColumnProfile): string | null {
  if (!NAME_HINTS[role].test(c.name)) return null;
  const named = `column '${c.name}' is named like ${role === 'action' ? 'an' : 'a'} ${role} but`;
  if (c.nonNull === 0) return `${named} every value is empty`;
  if (role === 'propensity' && c.kind === 'text' && (c.decimalComma ?? 0) >= 0.9 * c.nonNull) {
    return `${named} holds numbers written with a decimal comma (like 0,25); export the log with a decimal point`;
  }
  if (role === 'action' && c.distinct > 1000) return `${named} has ${distinctText(c)}, more than are suggested; map it explicitly if that is right`;
  if (role === 'action' && c.distinct < 2) return `${named} holds a single value; a log needs at least two actions`;
  if (role !== 'action' && c.kind === 'text' && c.parsedAsNumber < 0.9 * c.nonNull) return `${named} ${notNumbersText(c)}`;
  return null;
}

/** Specific messages about the mapping; 'fail' problems stop the audit's dependent checks. */
export function validateRoles(profile: Profile, roles: ResolvedRoles, evidence?: RoleEvidence): RoleProblem[] {
  const problems: RoleProblem[] = [];
  const byName = new Map(profile.columns.map((c) => [c.name, c]));
  for (const role of REQUIRED_ROLES) {
    if (roles[role]) continue;
    const why = profile.columns.map((c) => whyNotTaken(role, c)).find((x) => x !== null);
    problems.push({ role, severity: 'fail', message: `no ${role} column: map one with --role ${role}=COLUMN${why ? ` (${why})` : ''}` });
  }
  const p = roles.propensity ? byName.get(roles.propensity) : undefined;
  if (p) {
    if (p.kind === 'text') {
      const bad = p.nonNull - p.parsedAsNumber;
      problems.push({
        role: 'propensity',
        severity: bad > 0.5 * Math.max(1, p.nonNull) ? 'fail' : 'warn',
        message: `propensity column '${p.name}' is ${p.type}; ${notNumbersText(p)}`,
      });
    } else if (p.kind !== 'numeric') {
      problems.push({ role: 'propensity', severity: 'fail', message: `propensity column '${p.name}' is ${p.type}, not numeric` });
    }
  }
  const r = roles.reward ? byName.get(roles.reward) : undefined;
  if (r) {
    if (r.kind === 'text') {
      const bad = r.nonNull - r.parsedAsNumber;
      problems.push({ role: 'reward', severity: bad > 0.5 * Math.max(1, r.nonNull) ? 'fail' : 'warn', message: `reward column '${r.name}' is ${r.type}; ${notNumbersText(r)}` });
    } else if (r.kind !== 'numeric' && r.kind !== 'boolean') {
      problems.push({ role: 'reward', severity: 'fail', message: `reward column '${r.name}' is ${r.type}, not numeric` });
    }
  }
  const a = roles.action ? byName.get(roles.action) : undefined;
  if (a && a.kind === 'other') problems.push({ role: 'action', severity: 'fail', message: `action column '${a.name}' is ${a.type}; an action must be a scalar value` });
  if (a && a.distinct < 2) problems.push({ role: 'action', severity: 'warn', message: `action column '${a.name}' has ${distinctText(a)}; a log needs at least two actions to evaluate another policy` });
  if (a && evidence && roles.propensity) {
    const fit = evidence.fits.find((f) => f.column === a.name && f.propensity === roles.propensity);
    const better = evidence.fits.filter((f) => f.propensity === roles.propensity && f.holds && f.column !== a.name).map((f) => `'${f.column}'`);
    // Only another column that balances speaks for a wrong action column; a column for which no other balances
    // either is the action with mis-logged propensities, which balance.weights locates by action, segment and time.
    if (fit && contradicts(fit) && better.length > 0) {
      problems.push({ role: 'action', severity: 'warn', message: `weight balance does not hold for action column '${a.name}' with propensity '${roles.propensity}' (${fitText(fit)}); it holds for ${better.join(', ')}, which may be the action` });
    }
  }
  const id = roles.decision_id ? byName.get(roles.decision_id) : undefined;
  if (id && id.distinctRows > 0) {
    const u = uniqueness(id);
    if (u.share < ID_REFUSE_SHARE) problems.push({ role: 'decision_id', severity: 'fail', message: `decision id column '${id.name}' is far from unique: ${u.text}; a decision id names one decision, so choose another column or none` });
    else if (u.share < ID_SUGGEST_SHARE) problems.push({ role: 'decision_id', severity: 'warn', message: `decision id column '${id.name}' is not nearly unique: ${u.text}; duplicates will be counted against it` });
  }
  const t = roles.time ? byName.get(roles.time) : undefined;
  if (t && !roles.timeEncoding) {
    const mixed = t.kind === 'text' && t.nonNull > 0 && t.parsedAsTime > 0;
    problems.push({ role: 'time', severity: 'warn', message: mixed
      ? `time column '${t.name}' mixes formats: only ${pct(t.parsedAsTime / t.nonNull)} of its values parse as timestamps (YYYY-MM-DD hh:mm:ss); export one format; time checks are skipped`
      : `time column '${t.name}' (${t.type}) is neither a timestamp nor parseable text nor Unix epoch integers; time checks are skipped` });
  }
  for (const s of roles.segments) {
    const c = byName.get(s);
    if (c && c.kind === 'other') problems.push({ role: 'segments', severity: 'fail', message: `segment column '${s}' is ${c.type}; segments must be scalar values` });
  }
  const used = [roles.action, roles.propensity, roles.reward, roles.decision_id, roles.time].filter((x): x is string => !!x);
  for (const s of roles.segments) if (used.includes(s)) problems.push({ role: 'segments', severity: 'fail', message: `column '${s}' is used both as a segment and as another role` });
  if (roles.action && roles.action === roles.propensity) problems.push({ role: 'action', severity: 'fail', message: 'action and propensity are mapped to the same column' });
  return problems;
}
