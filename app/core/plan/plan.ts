/**
 * Exported scan plans (README, "An exported plan"): the audit's statements for a table in an engine we do not
 * drive, and the audit from their results. The statements come in steps, because each step's parameters come
 * from the results before it: `describe` (the columns), `profile (first rows)`, `profile` (every row, with the
 * plans the first rows chose), then `cube scales` (ClickHouse only), `cube`, `tails` and `duplicates`. The plan
 * of the profile is profileLog's own (app/core/scan/profile.ts), run against the results given so far; the
 * cube is cubeSql's, with the buckets, caps, reward shift and grouping the profile chose, exactly as an audit
 * builds them, and it carries its schema id (CUBE_SCHEMA_ID). The tails statement is the weight groups of
 * app/core/parts/scan.ts: every target's largest weights and clip rows follow from it exactly (tailOf, clipOf).
 * Pure: the CLI reads and writes the files.
 */
import type { AuditScans, RoleInspection } from '../audit.ts';
import { clipOf, tailOf, type WeightGroups } from '../parts/merge.ts';
import { weightGroupsSql } from '../parts/scan.ts';
import { resolveRoles, type RoleOverrides } from '../roles/roles.ts';
import { cubePreludeSql, cubeSql, groupsByPropensity, groupsByReward, parseCappedDistinct, parseCube, rewardShift, type CubeSpec } from '../scan/cube.ts';
import { chooseBuckets, rowExpressions, timeRangeUs, type TimeBuckets } from '../scan/expressions.ts';
import { profileLog, type Profile } from '../scan/profile.ts';
import { duplicatesSql, parseDuplicates } from '../scan/rows.ts';
import { resolveSettings } from '../settings.ts';
import type { Dialect } from '../sql/dialect.ts';
import type { Table } from '../table.ts';

/** The cube result's schema id: its first column, `cube_schema`, holds it on every row. */
export const CUBE_SCHEMA_ID = 'counterweight.cube/1';

/** The statements of a plan, in order; each result is saved under its file stem (stem.parquet, .csv or .json). */
export const STATEMENTS = [
  { name: 'describe', stem: 'describe' },
  { name: 'profile (first rows)', stem: 'profile-first-rows' },
  { name: 'profile', stem: 'profile' },
  { name: 'cube scales', stem: 'cube-scales' },
  { name: 'cube', stem: 'cube' },
  { name: 'tails', stem: 'tails' },
  { name: 'duplicates', stem: 'duplicates' },
] as const;
export type StatementName = (typeof STATEMENTS)[number]['name'];
export const stemOf = (name: string): string => STATEMENTS.find((s) => s.name === name)?.stem ?? name;

export class PlanError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'PlanError';
  }
}

export interface PlanRequest {
  readonly dialect: Dialect;
  /** the table as the engine names it, already quoted (or a parenthesised SELECT with a filter) */
  readonly relation: string;
  readonly roles: RoleOverrides;
  readonly settings?: Readonly<Record<string, number | string | boolean>>;
  /** the results so far, by statement name */
  readonly results: ReadonlyMap<string, Table>;
}

export interface PlannedStatement {
  readonly name: string;
  readonly stem: string;
  readonly sql: string;
  /** its result is among the results given */
  readonly answered: boolean;
}

export interface Plan {
  readonly statements: readonly PlannedStatement[];
  /** every statement is answered: the audit can be made from the results */
  readonly complete: boolean;
  readonly profile: Profile | null;
  readonly cube: { readonly spec: CubeSpec; readonly capped: readonly number[]; readonly segments: readonly string[]; readonly buckets: TimeBuckets | null } | null;
}

class Unanswered extends Error {
  constructor(readonly statement: string) {
    super(`no result for ${statement}`);
  }
}

/** The statements that can be written from the results given, the first unanswered one last. */
export async function planScans(request: PlanRequest): Promise<Plan> {
  const statements: PlannedStatement[] = [];
  const d = request.dialect;
  const served = (name: string, sql: string): Promise<Table> => {
    statements.push({ name, stem: stemOf(name), sql, answered: request.results.has(name) });
    const t = request.results.get(name);
    return t ? Promise.resolve(t) : Promise.reject(new Unanswered(name));
  };
  let pending = '';
  const record = (name: string, sql: string) => { pending = name; return sql; };
  const run = (sql: string) => served(pending, sql);
  const stop = (e: unknown, profile: Profile | null, cube: Plan['cube']): Plan => {
    if (e instanceof Unanswered) return { statements, complete: false, profile, cube };
    throw e;
  };
  let profile: Profile;
  try {
    profile = await profileLog(run, request.relation, record, d);
  } catch (e) {
    return stop(e, null, null);
  }
  const settings = resolveSettings(request.settings);
  const roles = resolveRoles(profile, request.roles);
  for (const r of ['action', 'propensity', 'reward'] as const) {
    if (!request.roles[r]) throw new PlanError(`an exported plan needs every role given: --role ${r}=COLUMN (the roles cannot be suggested from results not yet run)`);
    if (!roles[r]) throw new PlanError(`the ${r} column ${request.roles[r]} is not among the table's columns`);
  }
  if (roles.target_propensity) throw new PlanError('an exported plan does not read a target_propensity column (its tails are weight groups)');
  const segments = [...roles.segments];
  const buckets = chooseBuckets(timeRangeUs(roles, profile), settings['time.bucket'], settings['time.max_buckets']);
  const cap = settings['segments.cap'];
  const capped = segments.flatMap((c, i) => ((profile.columns.find((x) => x.name === c)?.distinct ?? 0) > cap ? [i] : []));
  const rows = rowExpressions(roles, profile, buckets, d);
  const reward = rewardShift(profile.columns.find((c) => c.name === roles.reward));
  const spec: CubeSpec = { relation: request.relation, rows, capped, cap, floor: settings['support.floor.epsilon'], byPropensity: groupsByPropensity(profile.columns.find((c) => c.name === roles.propensity)), byReward: groupsByReward(profile.columns.find((c) => c.name === roles.reward)), reward, rowCount: profile.rows, dialect: d };
  const cube = { spec, capped, segments, buckets };
  try {
    const preludeSql = cubePreludeSql(spec);
    const prelude = preludeSql ? await served('cube scales', preludeSql) : null;
    const inner = cubeSql(spec, prelude);
    const cubeStatement = `SELECT ${d.literal(CUBE_SCHEMA_ID)} AS cube_schema, * FROM (\n${inner}\n) AS cube`;
    // the cube, tails and duplicates need nothing of each other: all three are written before any is asked for
    const later: [string, string][] = [['cube', cubeStatement], ['tails', weightGroupsSql(request.relation, rows.segments, rows.action, rows.propensity, rows.reward, d)]];
    if (roles.decision_id) later.push(['duplicates', duplicatesSql(request.relation, roles.decision_id, 5, d)]);
    for (const [name, sql] of later) statements.push({ name, stem: stemOf(name), sql, answered: request.results.has(name) });
  } catch (e) {
    return stop(e, profile, cube);
  }
  return { statements, complete: statements.every((s) => s.answered), profile, cube };
}

const columnOf = (t: Table, name: string) => t.columns[t.names.indexOf(name)] as readonly unknown[];

/** Columns a result must have; a clear error naming the file and the missing ones. */
export function requireColumns(t: Table, columns: readonly string[], what: string): void {
  const lacking = columns.filter((c) => !t.names.includes(c));
  if (lacking.length) throw new PlanError(`${what} lacks the column${lacking.length > 1 ? 's' : ''} ${lacking.join(', ')} (it has ${t.names.join(', ') || 'none'}); export the statement's result as it is`);
}

/** The cube result checked against its schema id. */
export function checkCube(t: Table, segmentCount: number, what: string): void {
  if (!t.names.includes('cube_schema')) throw new PlanError(`${what} is not a counterweight cube: it has no cube_schema column (expected ${CUBE_SCHEMA_ID}); export the result of the plan's cube statement`);
  const ids = new Set(columnOf(t, 'cube_schema').map(String));
  const other = [...ids].find((id) => id !== CUBE_SCHEMA_ID);
  if (other !== undefined) throw new PlanError(`${what} is a cube of schema ${other}; this counterweight reads ${CUBE_SCHEMA_ID}: run the plan printed by this version again`);
  requireColumns(t, [...Array.from({ length: segmentCount }, (_, i) => `s${i}`), 'a', 'v', 'b'], what);
}

/**
 * What an audit from a plan's results needs (runAudit's `inspection` and `scans`): the profile from the
 * profile results, the cube as given, tails and clip rows from the weight groups, duplicates as given.
 */
export function scansFromResults(plan: Plan, results: ReadonlyMap<string, Table>, names: ReadonlyMap<string, string>): { inspection: RoleInspection; scans: AuditScans } {
  if (!plan.complete || !plan.profile || !plan.cube) throw new PlanError(`the results lack ${plan.statements.filter((s) => !s.answered).map((s) => s.stem).join(', ') || 'the profile'}: run those statements of the plan first`);
  const { profile, cube } = plan;
  const label = (n: string) => names.get(n) ?? n;
  const cubeTable = results.get('cube') as Table;
  checkCube(cubeTable, cube.segments.length, label('cube'));
  let cells: ReturnType<typeof parseCube>;
  try {
    cells = parseCube(cubeTable, cube.segments.length);
  } catch (e) {
    throw new PlanError(`${label('cube')}: ${(e as Error).message}`);
  }
  const cappedDistinct = parseCappedDistinct(cubeTable, cube.capped);
  const tails = results.get('tails') as Table;
  requireColumns(tails, [...cube.segments.map((_, i) => `s${i}`), 'a', 'p', 'r', 'c'], label('tails'));
  const groups: WeightGroups = {
    segments: cube.segments.map((_, i) => columnOf(tails, `s${i}`).map(String)),
    action: columnOf(tails, 'a').map(String),
    p: columnOf(tails, 'p').map(Number),
    r: columnOf(tails, 'r').map((v) => (v === null ? null : Number(v))),
    rows: columnOf(tails, 'c').map(Number),
  };
  const dup = results.get('duplicates');
  if (dup) requireColumns(dup, ['ids', 'rows_in_duplicates', 'max_copies', 'example_ids'], label('duplicates'));
  const scans: AuditScans = {
    cube: ({ capped, cap, buckets }) => {
      const key = (b: TimeBuckets | null) => (b ? `${b.originUs}/${b.widthUs}/${b.count}` : 'none');
      const same = capped.join(',') === cube.capped.join(',') && cap === cube.spec.cap && key(buckets) === key(cube.buckets);
      if (!same) throw new PlanError('the audit\'s settings or roles differ from the plan\'s (caps or time buckets): give audit --cube the --role, --segments and --settings the plan was made with');
      return { cells, cappedDistinct };
    },
    duplicates: () => {
      if (!dup) throw new PlanError('the decision_id role is mapped but no duplicates result was given');
      return parseDuplicates(dup);
    },
    tail: (target, segs, actions, limit) => tailOf([groups], target, segs, actions, limit),
    clip: (target, segs, actions, above, limit) => clipOf([groups], target, segs, actions, above, limit),
  };
  const inspection = { profile, evidence: { columns: [] }, suggestions: [], queries: { profile: [], evidence: [] } } as unknown as RoleInspection;
  return { inspection, scans };
}
