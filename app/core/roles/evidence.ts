/**
 * Role evidence from the data. The action is the column for which the weight-balance identity holds:
 * with p the logging probability of the logged action A, E[1{A=a}/p] = 1 for every action a
 * (Horvitz & Thompson 1952), so B(a) = (1/n) Σ 1{A=a}/p ≈ 1. For any other categorical column c the same
 * sum estimates P(c=v)·E[1/p | c=v], the share of the value times the number of actions it was offered,
 * which is 1 only by coincidence. A decision id must be nearly unique.
 */
import { actionEvidenceSql, EVIDENCE_MAX_VALUES, parseActionEvidence, type EvidenceGroup } from '../scan/role-evidence.ts';
import { PREFIX_ROWS, type ColumnProfile, type Profile } from '../scan/profile.ts';
import type { RunQuery } from '../table.ts';
import type { Dialect } from '../sql/dialect.ts';
import { actionEvidenceSqlClickHouse } from '../scan/rows-clickhouse.ts';

/** Largest |B(a) − 1| over a column's values for the identity to count as holding (common practice: the balance check's 0.1, widened for logs with planted or real defects). */
export const FIT_TOLERANCE = 0.15;
/** Values holding less than this share of the valid rows do not decide the fit (their B is noisy). */
const FIT_MIN_SHARE = 0.01;
/** Below this many rows with a valid propensity the identity is too noisy to decide a role. */
export const FIT_MIN_ROWS = 200;

/** Share of distinct values at or above which a column can be suggested as the decision id. */
export const ID_SUGGEST_SHARE = 0.9;
/** Below this share of distinct values a decision id is refused: most ids would be shared by several rows. */
export const ID_REFUSE_SHARE = 0.5;

const EVIDENCE_CHUNK = 30;

export interface ValueBalance {
  readonly value: string | null;
  readonly rows: number;
  /** B(a) = (1/n) Σ 1{A=a}/p over rows with a valid p; n counts every such row */
  readonly b: number;
  /** standard error of B(a): sqrt((mean of X² − B²)/n) for X = 1{A=a}/p */
  readonly se: number;
}

export interface BalanceFit {
  readonly column: string;
  readonly propensity: string;
  /** rows with a valid propensity among the rows read */
  readonly rows: number;
  readonly values: readonly ValueBalance[];
  /** largest |B(a) − 1| over values holding at least FIT_MIN_SHARE of the rows */
  readonly maxDeviation: number;
  /** the value where that deviation is */
  readonly worst: ValueBalance | null;
  /** the identity holds within FIT_TOLERANCE on enough rows */
  readonly holds: boolean;
  /** more values than EVIDENCE_MAX_VALUES: not an action */
  readonly tooManyValues: boolean;
}

export interface RoleEvidence {
  /** rows the evidence was read from (the log's first rows) */
  readonly rowsRead: number;
  readonly fits: readonly BalanceFit[];
}

/** The weight-balance identity for one candidate column against one propensity column (index j in the groups). */
export function balanceFit(column: string, propensity: string, groups: readonly EvidenceGroup[], j: number): BalanceFit {
  const n = groups.reduce((s, g) => s + (g.valid[j] ?? 0), 0);
  const values: ValueBalance[] = groups.map((g) => {
    const b = n > 0 ? (g.sumInv[j] ?? 0) / n : 0;
    const m2 = n > 0 ? (g.sumInv2[j] ?? 0) / n : 0;
    return { value: g.value, rows: g.valid[j] ?? 0, b, se: n > 0 ? Math.sqrt(Math.max(0, m2 - b * b) / n) : Infinity };
  });
  const deciding = values.filter((v) => n > 0 && v.rows >= FIT_MIN_SHARE * n);
  let worst: ValueBalance | null = null;
  for (const v of deciding) if (!worst || Math.abs(v.b - 1) > Math.abs(worst.b - 1)) worst = v;
  const maxDeviation = worst ? Math.abs(worst.b - 1) : Infinity;
  const tooManyValues = groups.length > EVIDENCE_MAX_VALUES;
  return { column, propensity, rows: n, values, maxDeviation, worst, holds: !tooManyValues && n >= FIT_MIN_ROWS && deciding.length >= 2 && maxDeviation <= FIT_TOLERANCE, tooManyValues };
}

/** The data speak against the column as the action: enough rows, and its worst value is off by more than the tolerance and by over 3 standard errors. */
export function contradicts(f: BalanceFit): boolean {
  const w = f.worst;
  return !f.holds && !!w && f.rows >= FIT_MIN_ROWS && Math.abs(w.b - 1) > FIT_TOLERANCE && Math.abs(w.b - 1) > 3 * w.se;
}

function isProbabilityLike(c: ColumnProfile): boolean {
  return (c.kind === 'numeric' || (c.kind === 'text' && c.parsedAsNumber > 0.9 * c.nonNull)) && c.min !== null && c.max !== null && c.min >= 0 && c.max <= 1 && c.nonBinary > 0;
}

/** Columns that could hold a logging propensity: values within [0, 1] and not only 0 and 1. */
function propensityCandidates(profile: Profile): string[] {
  return profile.columns.filter((c) => isProbabilityLike(c) && !/target/i.test(c.name)).map((c) => c.name);
}

/** Columns that could hold the action: text, boolean or integers, with 2 to EVIDENCE_MAX_VALUES values. */
function actionCandidates(profile: Profile): string[] {
  return profile.columns
    .filter((c) => (c.kind === 'text' || c.kind === 'boolean' || (c.kind === 'numeric' && c.nonInteger === 0)) && c.distinct >= 2 && c.distinct <= EVIDENCE_MAX_VALUES)
    .filter((c) => c.distinct < 0.5 * Math.max(1, c.distinctRows))
    .map((c) => c.name);
}

/** The identity for every (action candidate, propensity candidate) pair: one aggregate per action candidate, in one read of the first rows. */
export async function gatherRoleEvidence(run: RunQuery, relation: string, profile: Profile, record: (name: string, sql: string, scans: boolean) => string = (_n, sql) => sql, d?: Dialect): Promise<RoleEvidence> {
  const props = propensityCandidates(profile);
  const fits: BalanceFit[] = [];
  if (props.length === 0) return { rowsRead: 0, fits };
  const candidates = actionCandidates(profile).filter((c) => !props.includes(c));
  if (candidates.length === 0) return { rowsRead: 0, fits };
  let rowsRead = 0;
  // GROUPING() packs one bit per candidate into an integer: a very wide log is read in chunks of EVIDENCE_CHUNK candidates
  for (let start = 0; start < candidates.length; start += EVIDENCE_CHUNK) {
    const chunk = candidates.slice(start, start + EVIDENCE_CHUNK);
    const table = await run(record(start === 0 ? 'role evidence' : `role evidence (${start + 1}-${start + chunk.length})`, (d?.name === 'clickhouse' ? actionEvidenceSqlClickHouse(relation, chunk, props.map((name) => ({ name, kind: profile.columns.find((c) => c.name === name)?.kind ?? 'other' })), PREFIX_ROWS) : actionEvidenceSql(relation, chunk, props)), true));
    const groups = parseActionEvidence(table, chunk.length, props.length);
    chunk.forEach((col, i) => {
      const g = groups[i] ?? [];
      rowsRead = Math.max(rowsRead, g.reduce((s, x) => s + x.rows, 0));
      props.forEach((p, j) => fits.push(balanceFit(col, p, g, j)));
    });
  }
  return { rowsRead, fits };
}

/** "B within 0.03 of 1 for all 5 values" / "B = 2.31 for 'north'" in words. */
export function fitText(f: BalanceFit): string {
  const shown = (v: string | null) => (v === null ? 'empty' : `'${v.length > 24 ? `${v.slice(0, 23)}…` : v}'`);
  if (f.tooManyValues) return `more than ${EVIDENCE_MAX_VALUES.toLocaleString('en')} values`;
  if (!Number.isFinite(f.maxDeviation)) return 'too few rows with a valid propensity to tell';
  if (f.holds) return `(1/n) Σ 1{A=a}/p is within ${f.maxDeviation.toFixed(2)} of 1 for all ${f.values.length} values`;
  return `(1/n) Σ 1{A=a}/p is ${f.worst ? f.worst.b.toFixed(2) : '?'} for ${f.worst ? shown(f.worst.value) : 'a value'}, not 1`;
}

/** Share of distinct values among the rows counted, and the words for it. */
export function uniqueness(c: ColumnProfile): { share: number; text: string } {
  const counted = Math.max(1, c.distinctRows);
  const share = Math.min(1, c.distinct / counted);
  const pct = `${(100 * share).toFixed(share > 0.999 && share < 1 ? 2 : 1)}%`;
  const of = c.distinctBasis === 'all rows' ? `${counted.toLocaleString('en')} rows` : `the first ${counted.toLocaleString('en')} rows`;
  return { share, text: `${Math.round(c.distinct).toLocaleString('en')} distinct values in ${of} (${pct})` };
}
