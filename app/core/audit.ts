/**
 * The audit: a small constant number of scans (profile, cube, duplicates, examples, and one tail
 * query per target), then pure checks over their results (DEVELOPERS.md, "The scans of one audit"). The only thing it needs
 * from an engine is `run(sql) -> Table`.
 */
import { CHECKS } from './checks/registry.ts';
import { type AuditContext, type DraftFinding, type TargetTail } from './checks/context.ts';
import { essSummary } from './checks/weights-ess.ts';
import { tailSummary } from './checks/weights-tail.ts';
import { estimatesFor } from './checks/estimate-preview.ts';
import type { CubeCell } from './cube/types.ts';
import type { CancelSignal } from './cancel.ts';
import { CAUTIONS, REPORT_SCHEMA_ID, type CheckResult, type Finding, type InputFile, type InputTable, type QueryRecord, type Report, type RolesReport, type SettingValue, type TargetSummary } from './model/report.ts';
import { resolveRoles, SINGLE_ROLES, suggestRoles as suggestFromProfile, validateRoles, type RoleEvidence, type RoleOverrides, type RoleSuggestion } from './roles/roles.ts';
import { gatherRoleEvidence } from './roles/evidence.ts';
import { chooseBuckets, rowExpressions, timeRangeUs, type TimeBuckets } from './scan/expressions.ts';
import { cubeGroupsSelect, cubePreludeSql, cubeReadsGroups, cubeSql, groupRows, groupsByPropensity, groupsByReward, parseCappedDistinct, parseCube, rewardShift, type RewardShift } from './scan/cube.ts';
import { findingSql } from './scan/drill.ts';
import { profileLog, type Profile } from './scan/profile.ts';
import { clipRowsSql, duplicatesSql, examplesSql, parseClipRows, parseDuplicates, parseTail, tailSql, type Duplicates, type TailResult } from './scan/rows.ts';
import { linkRemedies, remediesOf, type TargetClips } from './remedies/index.ts';
import { SETTINGS, resolveSettings, type SettingKey, type SettingSpec } from './settings.ts';
import type { Dialect } from './sql/dialect.ts';
import { duckdb } from './sql/dialect-duckdb.ts';
import { fingerprintSql, parseFingerprint } from './scan/fingerprint.ts';
import type { Cell, RunQuery, Table } from './table.ts';
import { analyseTarget, cubeView, type CubeView, type TargetAnalysis } from './targets/analysis.ts';
import { checkTargetActions, resolveTargets, parseTarget, type TargetInput, type TargetPolicy } from './targets/targets.ts';
import { psisTailLength } from './stats/psis.ts';
import { passOf, type AuditProgressEvent, type AuditStage, type PassKind, type StagePlan } from './progress.ts';
import { verdictOf, readiness } from './verdict.ts';
import { TOOL_VERSION } from './version.ts';

export type { TargetInput } from './targets/targets.ts';
export type { RoleSuggestion } from './roles/roles.ts';

export type { AuditStage } from './progress.ts';

export interface AuditRequest {
  /** quoted relation name of the registered source */
  readonly relation: string;
  readonly input: { readonly files: readonly InputFile[]; readonly format: string };
  /** the SQL dialect of the engine `run` speaks (DuckDB when absent) */
  readonly dialect?: Dialect;
  /** a table in a server as the log: recorded in the report's input with the source fingerprint the audit computes */
  readonly table?: Omit<InputTable, 'fingerprint'>;
  /** the table-function SQL behind the relation, recorded so a user can re-run every query */
  readonly scanSql?: string;
  readonly roles?: RoleOverrides;
  readonly targets?: readonly TargetInput[];
  readonly settings?: Readonly<Record<string, number | string | boolean>>;
  /** Stage starts (with the passes it plans), pass starts and stage ends (progress.ts turns them into shares). */
  readonly onProgress?: (p: AuditProgressEvent) => void;
  readonly engine: string;
  /** the caller's AbortSignal: checked between stages, and handed to `project` so a copy can be interrupted */
  readonly signal?: CancelSignal;
  /** clock for started_at and "future" timestamps; defaults to the current time */
  readonly now?: () => number;
  /**
   * The inspection made when this source was opened (inspectRoles on the same relation): its profile and
   * evidence are used, and their queries recorded, instead of reading the log for them again. The report
   * is the one a fresh audit makes.
   */
  readonly inspection?: RoleInspection;
  /**
   * Copies the named columns of the log into a temporary table of the engine (Engine.project) and answers
   * its name, or null when the log is cheap to read again (Parquet). Given for a CSV, the row-level
   * statements (cube, duplicates, tails, clip rows) read that table, so the file is parsed once for all of
   * them (the profile and the example rows read the log itself); the table is released before the checks run.
   */
  readonly project?: (columns: readonly string[], signal?: AuditRequest['signal']) => Promise<AuditProjection | null>;
  /**
   * Keeps the answer of one read statement over the log in a temporary table of the engine (Engine.materialise)
   * and answers its name. Given, and when the profile says the rows fall into few groups (rowGroupsPay), the
   * audit reads the log's row groups once (scan/cube.ts, cubeGroupsSelect) and the cube, the tails and the clip
   * rows read that table instead of the log: one read of the log for the three, the same answers. The table
   * is released before the duplicates statement runs.
   */
  readonly materialise?: (select: string, signal?: AuditRequest['signal']) => Promise<AuditProjection>;
  /** the process's peak resident memory in MB so far, read when the report is made (run.peak_rss_mb) */
  readonly peakRssMb?: () => number;
  /**
   * Answers to the row-level scans made elsewhere (an audit merged from parts, app/core/parts/merge.ts): the
   * cube, duplicates, tails and clip rows come from here and the engine is asked nothing; findings get no
   * example rows (their `sql` still says how to read them). Needs `inspection`.
   */
  readonly scans?: AuditScans;
}

/** A temporary table of some of the log's columns (app/engine/types.ts Projection). */
export interface AuditProjection {
  readonly relation: string;
  readonly sql: string;
  release(): Promise<void>;
}

/** The role and segment columns the row-level statements read, each once, in role order. */
export function projectedColumns(roles: Pick<RolesReport, 'segments'> & { readonly [role: string]: unknown }, logColumns: readonly string[]): string[] {
  const named = [...SINGLE_ROLES.map((r) => roles[r]), ...roles.segments];
  return [...new Set(named.filter((c): c is string => typeof c === 'string' && logColumns.includes(c)))];
}

/** The row-level scans' answers, as their parsers give them (app/core/scan/cube.ts, rows.ts). */
export interface AuditScans {
  cube(spec: { readonly capped: readonly number[]; readonly cap: number; readonly buckets: TimeBuckets | null; readonly reward: RewardShift | null; readonly floor: number; readonly byPropensity: boolean; readonly rowCount: number }): { cells: CubeCell[]; cappedDistinct: Map<number, number> };
  duplicates(examples: number): Duplicates;
  tail(target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], limit: number): TailResult;
  clip(target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], above: number, limit: number): { w: number; r: number | null }[];
  /**
   * The example-rows statement run over the log's rows where they still are (an audit merged from parts: its
   * part files), `sql` giving it for a relation; null when the rows cannot all be read (the findings then
   * carry no examples). Absent: no example rows.
   */
  examples?(sql: (relation: string) => string): Promise<Table | null>;
}

export class AuditCancelled extends Error {
  constructor() {
    super('the audit was cancelled');
    this.name = 'AuditCancelled';
  }
}

/** The log holds no rows: there is nothing to audit (an empty file, or a CSV with only its header). */
export class EmptyLogError extends Error {
  constructor(files: readonly InputFile[], profile: Profile) {
    const empty = files.length > 0 && files.every((f) => f.bytes === 0);
    const names = profile.columns.map((c) => c.name);
    const headerOnly = names.length > 0 && !(names.length === 1 && names[0] === 'column0');
    super(empty
      ? `the log is empty (${files.map((f) => f.path).join(', ')}: 0 bytes); there is nothing to audit.`
      : `the log has no rows${headerOnly ? ` (only a header: ${names.map((n) => JSON.stringify(n)).join(', ')})` : ''}; there is nothing to audit. Check that the export finished.`);
    this.name = 'EmptyLogError';
  }
}

export interface AuditResult {
  readonly report: Report;
  readonly cells: readonly CubeCell[];
  readonly profile: Profile;
  /** what the checks ran on (a test runs a check's fast path and its plain definition on it) */
  readonly context: AuditContext;
}


/** Suggested roles with reasons: the profile, then the weight-balance evidence over the log's first rows. */
export async function suggestRoles(run: RunQuery, relation: string, d: Dialect = duckdb): Promise<RoleSuggestion[]> {
  return (await inspectRoles(run, relation, d)).suggestions;
}

export interface RoleInspection {
  readonly profile: Profile;
  readonly evidence: RoleEvidence;
  readonly suggestions: RoleSuggestion[];
  /** the queries that made the profile and the evidence, recorded as an audit records them */
  readonly queries: { readonly profile: readonly QueryRecord[]; readonly evidence: readonly QueryRecord[] };
}

/**
 * What opening a log needs to propose roles: its profile, the role evidence, and the suggestions from both.
 * An audit of the same source may be given it (AuditRequest.inspection) and then profiles nothing again.
 */
export async function inspectRoles(run: RunQuery, relation: string, d: Dialect = duckdb): Promise<RoleInspection> {
  const recorder = (into: QueryRecord[]) => (name: string, sql: string, scans: boolean) => {
    into.push({ name, sql, scans_source: scans });
    return sql;
  };
  const profileQueries: QueryRecord[] = [];
  const evidenceQueries: QueryRecord[] = [];
  const profile = await profileLog(run, relation, recorder(profileQueries), d);
  const evidence = await gatherRoleEvidence(run, relation, profile, recorder(evidenceQueries), d);
  return { profile, evidence, suggestions: suggestFromProfile(profile, evidence), queries: { profile: profileQueries, evidence: evidenceQueries } };
}

/** The evidence is read only when the action is not mapped by hand (it decides the action suggestion). */
const needsEvidence = (roles: RoleOverrides | undefined) => !roles?.action;

/** JSON carries no bigint, NaN or Infinity: example values are made JSON-safe here, once. */
function jsonCell(v: Cell): Cell {
  if (typeof v === 'bigint') return Number.isSafeInteger(Number(v)) ? Number(v) : v.toString();
  if (typeof v === 'number' && !Number.isFinite(v)) return String(v);
  if (Array.isArray(v)) return v.map(jsonCell);
  if (v !== null && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, jsonCell(x)]));
  return v;
}

export async function runAudit(run: RunQuery, request: AuditRequest): Promise<Report> {
  return (await runAuditDetailed(run, request)).report;
}

export async function runAuditDetailed(run: RunQuery, request: AuditRequest): Promise<AuditResult> {
  const now = request.now ?? Date.now;
  const started = now();
  const queries: QueryRecord[] = [];
  let stageNow: AuditStage = 'profile';
  const record = (name: string, sql: string, scans: boolean) => {
    queries.push({ name, sql, scans_source: scans });
    if (scans) request.onProgress?.({ stage: stageNow, pass: passOf(name) });
    return sql;
  };
  const guard = () => {
    if (request.signal?.aborted) throw new AuditCancelled();
  };
  const progress = (stage: AuditStage, done = false, plan?: StagePlan, cells?: number) => {
    if (!done) stageNow = stage;
    request.onProgress?.({ stage, ...(done ? { done } : {}), ...(plan ? { plan } : {}), ...(cells === undefined ? {} : { cells }) });
  };
  const settings = resolveSettings(request.settings);
  const { relation, scans } = request;
  if (scans && !request.inspection) throw new Error('an audit from given scans needs the inspection (the profile) too');
  const d = request.dialect ?? duckdb;
  if (request.scanSql) queries.push({ name: 'source', sql: `CREATE VIEW ${relation} AS ${request.scanSql}`, scans_source: false });

  guard();
  const inspected = request.inspection;
  progress('profile', false, { passes: inspected ? [] : needsEvidence(request.roles) ? ['profile-first', 'profile', 'evidence'] : ['profile-first', 'profile'] });
  if (inspected) queries.push(...inspected.queries.profile);
  const profile = inspected ? inspected.profile : await profileLog(run, relation, record, d);
  if (profile.rows === 0) throw new EmptyLogError(request.input.files, profile);
  progress('profile', true);
  let evidence: RoleEvidence | undefined;
  if (needsEvidence(request.roles)) {
    if (inspected) queries.push(...inspected.queries.evidence);
    evidence = inspected ? inspected.evidence : await gatherRoleEvidence(run, relation, profile, record, d);
  }
  const roles = resolveRoles(profile, request.roles, evidence);
  const roleProblems = validateRoles(profile, roles, evidence);
  const logColumns = profile.columns.map((c) => c.name);
  const explicit: TargetPolicy[] = (request.targets ?? []).map((t) => parseTarget(t, { actionColumn: roles.action ?? 'action', logColumns, targetColumn: roles.target_propensity }));
  const usable = roleProblems.every((p) => p.severity !== 'fail' || (p.role !== 'action' && p.role !== 'propensity' && p.role !== 'reward')) && !!roles.action && !!roles.propensity && !!roles.reward;

  const segmentColumns = [...roles.segments];
  for (const t of explicit) if (t.kind === 'table') for (const k of t.keyColumns) if (!segmentColumns.includes(k)) segmentColumns.push(k);
  const effectiveRoles = { ...roles, segments: segmentColumns, target_propensity: roles.target_propensity ?? explicit.find((t) => t.kind === 'column')?.column ?? null };
  const buckets = chooseBuckets(timeRangeUs(roles, profile), settings['time.bucket'], settings['time.max_buckets']);
  const cap = settings['segments.cap'];
  const caps: RolesReport['caps'] = {};
  const capped: number[] = [];
  segmentColumns.forEach((c, i) => {
    const p = profile.columns.find((x) => x.name === c);
    const keyOfTable = explicit.some((t) => t.kind === 'table' && t.keyColumns.includes(c));
    if (p && p.distinct > cap && !keyOfTable) {
      capped.push(i);
      caps[c] = { distinct: Math.round(p.distinct), kept: cap };
    }
  });

  let cells: CubeCell[] = [];
  let duplicates: Duplicates | null = null;
  const tails = new Map<string, TargetTail>();
  const rowsExpr = usable ? rowExpressions(effectiveRoles, profile, buckets, d) : null;
  const propensityProfile = profile.columns.find((c) => c.name === roles.propensity);
  const byPropensity = groupsByPropensity(propensityProfile);
  let targets: TargetAnalysis[] = [];
  guard();
  // A CSV is parsed once for the row-level statements: they read a temporary table of the columns they use.
  const projection = !scans && request.project && (rowsExpr || roles.decision_id) ? await request.project(projectedColumns(effectiveRoles, logColumns), request.signal) : null;
  if (projection) queries.push({ name: 'projection', sql: projection.sql, scans_source: true });
  const rowSource = projection ? projection.relation : relation;
  const readsSource = !projection;
  const clips = new Map<string, TargetClips>();
  const rewardProfile = profile.columns.find((c) => c.name === roles.reward);
  const reward = rewardShift(rewardProfile);
  const byReward = groupsByReward(rewardProfile);
  let groups: AuditProjection | null = null;
  let view: CubeView;
  let primaryTargets: TargetAnalysis[];
  try {
    if (rowsExpr) {
      progress('cube', false, { passes: scans ? [] : d.name === 'clickhouse' ? ['scales', 'cube'] : ['cube'] });
      let cappedDistinct: Map<number, number>;
      if (scans) ({ cells, cappedDistinct } = scans.cube({ capped, cap, buckets, reward, floor: settings['support.floor.epsilon'], byPropensity, rowCount: profile.rows }));
      else {
        const spec = { relation: rowSource, rows: rowsExpr, capped, cap, floor: settings['support.floor.epsilon'], byPropensity, byReward, reward, rowCount: profile.rows, dialect: d };
        if (request.materialise && cubeReadsGroups(spec) && rowGroupsPay(profile, effectiveRoles, capped.map((i) => segmentColumns[i] as string))) {
          // one read of the log for the cube, the tails and the clip rows: its row groups, kept in a temporary table
          request.onProgress?.({ stage: 'cube', pass: 'cube' });
          groups = await request.materialise(cubeGroupsSelect(spec), request.signal);
          queries.push({ name: 'row groups', sql: groups.sql, scans_source: readsSource });
        }
        const preludeSql = cubePreludeSql(spec);
        const prelude = preludeSql ? await run(record('cube scales', preludeSql, readsSource)) : null;
        const cube = await run(record('cube', cubeSql(groups ? { ...spec, groups: groups.relation } : spec, prelude), readsSource && !groups));
        cells = parseCube(cube, segmentColumns.length);
        cappedDistinct = parseCappedDistinct(cube, capped);
      }
      for (const [i, distinct] of cappedDistinct) {
        const c = segmentColumns[i] as string;
        caps[c] = { distinct, kept: cap };
      }
      progress('cube', true, undefined, cells.length);
    }
    view = cubeView(cells, segmentColumns);
    if (rowsExpr) checkTargetActions(explicit, view.actions);
    guard();
    if (rowsExpr) {
      const policies = explicit.length ? explicit : resolveTargets([], { actionColumn: roles.action ?? 'action', logColumns, targetColumn: null }, implicitActions(cells, view.actions, cap));
      targets = policies.map((p) => analyseTarget(p, view));
    }
    const tailPasses: PassKind[] = scans ? [] : groups ? (roles.decision_id ? ['duplicates'] : []) : [...(roles.decision_id ? ['duplicates' as const] : []), ...targets.filter((t) => t.n >= 2).map(() => 'tail' as const), ...targets.filter((t) => t.n >= 2 && (!t.target.implicit || t.target.kind === 'uniform')).map(() => 'clip' as const)];
    progress('tails', false, { passes: tailPasses });
    // without a groups table, as before: duplicates, then the tails and clip rows (each a read of the log)
    if (roles.decision_id && !groups) duplicates = scans ? scans.duplicates(5) : parseDuplicates(await run(record('duplicates', duplicatesSql(rowSource, roles.decision_id, 5, d, profile.rows), readsSource)));
    // over the groups table, the tails and clip rows read it (a group stands for its nr rows) and not the log
    const tailSource = groups ? groups.relation : rowSource;
    const tailRows = groups && rowsExpr ? groupRows(rowsExpr) : rowsExpr;
    const counted = groups ? 'nr' : undefined;
    if (rowsExpr && tailRows) {
      for (const t of targets) {
        guard();
        if (t.n < 2) continue;
        const limit = Math.max(psisTailLength(t.n) + 1, Math.ceil(0.01 * t.n));
        tails.set(t.target.name, scans ? scans.tail(t.target, segmentColumns, view.actions, limit) : parseTail(await run(record(`tail ${t.target.name}`, tailSql(tailSource, tailRows, t.target, segmentColumns, view.actions, limit, byPropensity, counted), readsSource && !groups))));
      }
    }
    primaryTargets = targets.filter((t) => !t.target.implicit || t.target.kind === 'uniform');
    if (rowsExpr && tailRows) {
      for (const t of primaryTargets) {
        const tail = tails.get(t.target.name);
        if (!tail || tail.weights.length === 0) continue;
        guard();
        // the rows above the tail's smallest listed weight are all listed; when the tail holds every positive weight, all of them
        const complete = tail.counts.reduce((a, b) => a + b, 0) <= tail.weights.length;
        const exactAbove = complete ? 0 : (tail.weights[tail.weights.length - 1] as number);
        const rows = scans ? scans.clip(t.target, segmentColumns, view.actions, exactAbove, tail.weights.length) : parseClipRows(await run(record(`clip ${t.target.name}`, clipRowsSql(tailSource, tailRows, t.target, segmentColumns, view.actions, exactAbove, tail.weights.length, counted), readsSource && !groups)));
        clips.set(t.target.name, { exactAbove, rows, maxWeight: tail.weights[0] as number });
      }
    }
    // the groups table is released before the duplicate-id sort, whose memory is the audit's largest
    if (groups) {
      const done = groups;
      groups = null;
      await done.release();
      guard();
      if (roles.decision_id) duplicates = parseDuplicates(await run(record('duplicates', duplicatesSql(rowSource, roles.decision_id, 5, d, profile.rows), readsSource)));
    }
  } finally {
    await groups?.release();
    await projection?.release();
  }
  progress('tails', true);
  guard();
  const perFinding = scans && !scans.examples ? 0 : settings['examples.per_finding'];
  progress('checks', false, { passes: perFinding === 0 ? [] : ['examples'], cells: cells.length });
  const ctx: AuditContext = { profile, roles: effectiveRoles, roleProblems, cells, view, segmentColumns, buckets, settings, targets, tails, duplicates, nowUs: started * 1000, rows: rowsExpr, primaryTargets };
  const drafts = runChecks(ctx);
  const examplesOf = scans?.examples ? scans.examples.bind(scans) : (sql: (relation: string) => string) => run(sql(relation));
  const checks = await attachExamples(examplesOf, record, relation, view, drafts, perFinding, settings['examples.max_findings'], exampleOrder(effectiveRoles, profile, d), request.input.format === 'parquet', d);
  progress('checks', true);
  const verdictReasons = verdictOf(checks);
  const remedies = remediesOf(ctx, clips);
  const linked = remedies ? linkRemedies(checks, verdictReasons.reasons) : { checks, reasons: verdictReasons.reasons };
  const verdict = verdictReasons.verdict;
  const reasons = linked.reasons;
  const table = request.table ? { ...request.table, fingerprint: await sourceFingerprint(run, record, relation, d, effectiveRoles) } : null;
  const report: Report = {
    schema: REPORT_SCHEMA_ID,
    tool: { name: 'counterweight', version: TOOL_VERSION },
    input: { files: request.input.files, format: request.input.format, rows: profile.rows, ...(table ? { table } : {}) },
    roles: rolesReport(effectiveRoles, caps),
    settings: settingsReport(settings),
    verdict,
    reasons,
    checks: linked.checks,
    targets: targets.map((t) => targetSummary(t, tails.get(t.target.name)?.weights, cells)),
    segments: readiness(ctx, checks),
    ...(remedies ? { remedies } : {}),
    queries,
    cautions: CAUTIONS,
    run: { engine: request.engine, started_at: new Date(started).toISOString(), seconds: (now() - started) / 1000, source_scans: queries.filter((q) => q.scans_source).length, ...(request.peakRssMb ? { peak_rss_mb: request.peakRssMb() } : {}) },
    signoff: null,
  };
  return { report, cells, profile, context: ctx };
}

/** Rows per (propensity, reward, capped segment values) combination below which the groups table does not pay. */
export const ROW_GROUPS_MIN_ROWS_PER_PAIR = 64;

/**
 * Whether the log's row groups are likely few enough to be worth a table of their own (AuditRequest.materialise),
 * decided from the profile before any row is read. The groups are at least as many as the distinct (p, r) pairs
 * and the values of a segment column over the cap (each kept uncapped in the groups); the profile counts p and r
 * over every row whenever the cube groups by them (cubeReadsGroups), so the product of those counts is known.
 * When it comes near the row count the table is about as large as the log and costs more than it saves
 * (bench/NOTES.md, "One read for the cube, tails and clip rows": 10M rows in ~10M groups, 8 CPU s more), so the
 * product must leave ROW_GROUPS_MIN_ROWS_PER_PAIR rows per combination. It is a lower bound on the groups, not an
 * upper one: a log whose propensities vary independently of its cells can still have many more groups.
 */
export function rowGroupsPay(profile: Profile, roles: { readonly propensity: string | null; readonly reward: string | null }, capped: readonly string[]): boolean {
  const distinct = (name: string | null) => profile.columns.find((c) => c.name === name)?.distinct ?? Infinity;
  const combinations = [roles.propensity, roles.reward, ...capped].reduce((n, c) => n * Math.max(1, distinct(c)), 1);
  return combinations * ROW_GROUPS_MIN_ROWS_PER_PAIR <= profile.rows;
}

/** The row count and the order-independent hash sum over the mapped role columns, computed in the engine. */
async function sourceFingerprint(run: RunQuery, record: (n: string, s: string, scans: boolean) => string, relation: string, d: Dialect, roles: RolesReport | ReturnType<typeof resolveRoles>): Promise<InputTable['fingerprint']> {
  const single = [roles.decision_id, roles.time, roles.action, roles.propensity, roles.reward, roles.policy_version, roles.target_propensity];
  const columns = [...new Set([...single, ...roles.segments].filter((c): c is string => !!c))];
  const fp = parseFingerprint(d, await run(record('fingerprint', fingerprintSql(d, relation, columns), true)), columns);
  return { rows: fp.rows, hash: fp.hash, columns: fp.columns, method: fp.method };
}

/**
 * Actions that get an implicit always:<action> target: all of them, or the `cap` most logged when
 * there are more (each target costs one tail scan; a catalogue of 10^4 items must not cost 10^4 scans).
 */
function implicitActions(cells: readonly CubeCell[], actions: readonly string[], cap: number): readonly string[] {
  if (actions.length <= cap) return actions;
  const rows = new Map<string, number>();
  for (const c of cells) rows.set(c.action, (rows.get(c.action) ?? 0) + c.n);
  return [...actions].sort((a, b) => (rows.get(b) ?? 0) - (rows.get(a) ?? 0) || (a < b ? -1 : a > b ? 1 : 0)).slice(0, cap).sort();
}

/**
 * Every check over one context, in registry order. A check that throws becomes status `error` with its
 * message, instead of taking the audit down; the verdict treats an erroring blocking check as a fail.
 */
export function runChecks(ctx: AuditContext): CheckResult[] {
  return CHECKS.map((check): CheckResult => {
    try {
      return check.run(ctx);
    } catch (e) {
      return { id: check.id, title: check.title, status: 'error', summary: `Could not run: ${(e as Error).message}.`, metrics: {}, findings: [], settings_used: [...check.settings] };
    }
  });
}

/**
 * Example rows come earliest first: by the time role, then the decision id, then every other scalar
 * column, so that rows tied on time and id still come in one order on every engine.
 */
function exampleOrder(roles: { decision_id: string | null; time: string | null }, profile: Profile, d: Dialect): string[] {
  const first = [roles.time, roles.decision_id].filter((c): c is string => !!c);
  const rest = profile.columns.filter((c) => c.kind !== 'other' && !first.includes(c.name)).map((c) => c.name);
  return [...first, ...rest].map((c) => d.ident(c));
}

/** Rows the cube holds for one action within a segment (segment columns not named count as any value). */
function cellRows(view: CubeView, segment: Readonly<Record<string, string>>, action: string): number {
  const wanted = Object.entries(segment).map(([c, v]) => [view.segmentColumns.indexOf(c), v] as const);
  if (wanted.some(([i]) => i < 0)) return NaN;
  let n = 0;
  for (const c of view.cells) if (c.action === action && wanted.every(([i, v]) => c.segment[i] === v)) n += c.totals.n;
  return n;
}

async function attachExamples(run: (sql: (relation: string) => string) => Promise<Table | null>, record: (n: string, s: string, scans: boolean) => string, relation: string, view: CubeView, checks: CheckResult[], perFinding: number, maxFindings: number, order: readonly string[], rereadIsCheap: boolean, d: Dialect): Promise<CheckResult[]> {
  const wanted: { check: number; finding: number; where: string }[] = [];
  const empty = new Set<string>();
  checks.forEach((c, ci) => c.findings.forEach((f, fi) => {
    const w = (f as DraftFinding).where;
    if (!w || perFinding <= 0 || f.status === 'pass' || wanted.length >= maxFindings || c.findings.slice(0, fi).filter((x) => (x as DraftFinding).where).length >= 5) return;
    // a finding about one action in one segment selects rows of that cell; when the cube holds none
    // (an action never logged there), its examples are known to be none without reading the log
    if (f.action !== undefined && cellRows(view, f.segment, f.action) === 0) empty.add(`${ci}/${fi}`);
    else wanted.push({ check: ci, finding: fi, where: w });
  }));
  let table: Table | null = null;
  if (wanted.length) table = await run((rel) => record('examples', examplesSql(rel, wanted, perFinding, order, rereadIsCheap, d), true));
  // the rows could not all be read (an audit merged from parts whose part files are gone): no examples, rather than some
  const unread = wanted.length > 0 && table === null;
  const byRequest = new Map<number, Record<string, Cell>[]>();
  if (table) {
    const fcol = table.columns[0] as readonly Cell[];
    for (let i = 0; i < table.rowCount; i++) {
      const k = Number(fcol[i]);
      const row: Record<string, Cell> = {};
      for (let j = 1; j < table.names.length; j++) row[table.names[j] as string] = jsonCell((table.columns[j] as readonly Cell[])[i] ?? null);
      const list = byRequest.get(k) ?? [];
      list.push(row);
      byRequest.set(k, list);
    }
  }
  return checks.map((c, ci) => ({
    ...c,
    findings: c.findings.map((f, fi): Finding => {
      const { where, ...rest } = f as DraftFinding;
      const k = wanted.findIndex((w) => w.check === ci && w.finding === fi);
      const examples = k >= 0 ? (unread ? undefined : byRequest.get(k) ?? []) : empty.has(`${ci}/${fi}`) ? [] : undefined;
      return { ...rest, ...(where ? { sql: findingSql(where) } : {}), ...(examples ? { examples } : {}) };
    }),
  }));
}

function rolesReport(r: ReturnType<typeof resolveRoles>, caps: RolesReport['caps']): RolesReport {
  return {
    decision_id: r.decision_id,
    time: r.time,
    action: r.action,
    propensity: r.propensity,
    reward: r.reward,
    segments: r.segments,
    policy_version: r.policy_version,
    target_propensity: r.target_propensity,
    propensity_vector: r.propensity_vector,
    action_set_size: r.action_set_size,
    reasons: r.reasons,
    caps,
  };
}

function settingsReport(s: ReturnType<typeof resolveSettings>): Record<string, SettingValue> {
  const out: Record<string, SettingValue> = {};
  for (const [k, spec] of Object.entries(SETTINGS) as [SettingKey, SettingSpec][]) out[k] = { value: s[k], default: spec.default, source: spec.source, description: spec.description };
  return out;
}

function targetSummary(t: TargetAnalysis, tail: readonly number[] | undefined, cells: readonly CubeCell[]): TargetSummary {
  const e = essSummary(t, tail);
  const k = tailSummary(t, tail);
  const rewarded = cells.filter((c) => c.action !== '(null)').reduce((s, c) => s + c.nRw, 0);
  const est = estimatesFor(t, rewarded);
  return {
    name: t.target.name,
    spec: t.target.spec,
    ess: e.ess,
    ess_fraction: e.fraction,
    max_weight: e.maxWeight,
    top1_weight_share: e.top1Share ?? 0,
    khat: k.khat,
    khat_threshold: k.threshold,
    tail_length: k.tailLength,
    support_deficit: t.supportDeficit,
    ips: est.ips,
    snips: est.snips,
    dr: est.dr,
    detectable_difference: est.detectable,
  };
}
