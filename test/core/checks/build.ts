/**
 * Audit contexts from hand-written rows, for per-check tests: no engine, no generator, no committed log.
 * A test lists groups of identical rows ({ segment, action, bucket, version, p, r, count }); the builder
 * sums them into cube cells (the cube's own cell type, each measure from the measures table's in-memory term),
 * rolls them up the way the audit does (cubeView, analyseTarget), and takes each target's weight tail
 * exactly from the rows. Everything else in the context (profile, roles, buckets) is the plainest value
 * that says what the rows say.
 */
import type { AuditContext, TargetTail } from '../../../app/core/checks/context.ts';
import { blankCell, CELL_MEASURES, DERIVED_MEASURES } from '../../../app/core/cube/measures.ts';
import type { CubeCell } from '../../../app/core/cube/types.ts';
import { SEP } from '../../../app/core/cube/rollup.ts';
import type { ResolvedRoles } from '../../../app/core/roles/roles.ts';
import type { RowExpressions, TimeBuckets } from '../../../app/core/scan/expressions.ts';
import type { ColumnProfile, Profile } from '../../../app/core/scan/profile.ts';
import type { Duplicates } from '../../../app/core/scan/rows.ts';
import { LOG10_BIN } from '../../../app/core/scan/rows.ts';
import { resolveSettings } from '../../../app/core/settings.ts';
import { analyseTarget, cubeView } from '../../../app/core/targets/analysis.ts';
import { parseTarget, resolveTargets, type TargetInput } from '../../../app/core/targets/targets.ts';
import { duckdb } from '../../../app/core/sql/dialect-duckdb.ts';

/** `count` identical rows. p null or outside (0, 1] is an invalid propensity; r null is a missing reward. */
export interface Rows {
  readonly segment?: readonly string[];
  readonly action: string;
  readonly bucket?: number;
  readonly version?: string;
  readonly p: number | null;
  readonly r?: number | null;
  readonly count?: number;
}

export const FLOOR = 0.01;

/**
 * One cube cell from rows that all share (segment, action, bucket, version): each measure of the cube's table
 * (app/core/cube/measures.ts) from its in-memory term, so a new measure needs nothing here. The centred sums
 * use shift 0 (any constant shift is valid).
 */
export function cellOf(rows: readonly Rows[], floor = FLOOR): CubeCell {
  const first = rows[0] as Rows;
  const cell = blankCell();
  for (const m of CELL_MEASURES) cell[m.field] = m.merge === 'sum' ? 0 : null;
  for (const g of rows) {
    const k = g.count ?? 1;
    const r = g.r === undefined ? 0 : g.r;
    const row = { p: g.p, r, d: r };
    for (const m of CELL_MEASURES) {
      const v = m.term(row, { floor, d: duckdb });
      if (v === null) continue;
      const now = cell[m.field] as number | null;
      cell[m.field] = m.merge === 'sum' ? (now as number) + k * v : now === null ? v : m.merge === 'min' ? Math.min(now, v) : Math.max(now, v);
    }
  }
  for (const d of DERIVED_MEASURES) cell[d.field] = d.of.reduce((sum, f) => sum + (cell[f] as number), 0);
  Object.assign(cell, { segment: first.segment ?? [], action: first.action, bucket: first.bucket ?? 0, version: first.version ?? '', target: null });
  return cell as unknown as CubeCell;
}

/** Rows grouped into cube cells by (segment, action, bucket, version). */
export function cellsOf(rows: readonly Rows[], floor = FLOOR): CubeCell[] {
  const groups = new Map<string, Rows[]>();
  for (const g of rows) {
    const k = [(g.segment ?? []).join(SEP), g.action, g.bucket ?? 0, g.version ?? ''].join('\u0000');
    const list = groups.get(k) ?? [];
    list.push(g);
    groups.set(k, list);
  }
  return [...groups.values()].map((g) => cellOf(g, floor));
}

export interface ContextOptions {
  readonly segmentColumns?: readonly string[];
  /** number of daily buckets; omitted: no time column */
  readonly days?: number;
  readonly versions?: boolean;
  readonly targets?: readonly TargetInput[];
  readonly settings?: Readonly<Record<string, number | string>>;
  readonly duplicates?: Duplicates | null;
  /** reward column kind as the profile would report it */
  readonly binaryReward?: boolean;
}

const DAY_US = 86_400_000_000;
const ORIGIN_US = Date.UTC(2026, 0, 1) * 1000;

function column(name: string, type: string, kind: ColumnProfile['kind'], nonNull: number, extra: Partial<ColumnProfile> = {}): ColumnProfile {
  return { name, type, kind, nonNull, distinct: 0, distinctBasis: 'all rows', distinctRows: nonNull, min: null, max: null, nan: 0, infinite: 0, nonBinary: 0, nonInteger: 0, parsedAsNumber: 0, parsedAsTime: 0, minTimeUs: null, maxTimeUs: null, ...extra };
}

/** An audit context over hand-written rows, as runAuditDetailed would build it after its scans. */
export function contextOf(rows: readonly Rows[], options: ContextOptions = {}): AuditContext {
  const settings = resolveSettings(options.settings ?? {});
  const segmentColumns = options.segmentColumns ?? (rows[0]?.segment ?? []).map((_, i) => `s${i}`);
  const cells = cellsOf(rows, settings['support.floor.epsilon']);
  const view = cubeView(cells, segmentColumns);
  const n = rows.reduce((s, g) => s + (g.count ?? 1), 0);
  const rewards = rows.filter((g) => g.r !== null && g.r !== undefined && Number.isFinite(g.r)).map((g) => g.r as number);
  const nonBinary = rows.filter((g) => g.r !== null && g.r !== undefined && g.r !== 0 && g.r !== 1).reduce((s, g) => s + (g.count ?? 1), 0);
  const rewardRows = rows.filter((g) => g.r !== null).reduce((s, g) => s + (g.count ?? 1), 0);
  const days = options.days;
  const buckets: TimeBuckets | null = days ? { originUs: ORIGIN_US, widthUs: DAY_US, count: days, label: '1d' } : null;
  const columns: ColumnProfile[] = [
    column('decision_id', 'VARCHAR', 'text', n, { distinct: n }),
    column('action', 'VARCHAR', 'text', n, { distinct: view.actions.length }),
    column('propensity', 'DOUBLE', 'numeric', rows.filter((g) => g.p !== null).reduce((s, g) => s + (g.count ?? 1), 0)),
    column('reward', 'DOUBLE', 'numeric', rewardRows, { min: rewards.length ? Math.min(...rewards) : null, max: rewards.length ? Math.max(...rewards) : null, nonBinary: options.binaryReward === false ? Math.max(1, nonBinary) : nonBinary }),
    ...segmentColumns.map((c) => column(c, 'VARCHAR', 'text', n)),
    ...(days ? [column('logged_at', 'TIMESTAMP', 'temporal', n, { minTimeUs: ORIGIN_US, maxTimeUs: ORIGIN_US + days * DAY_US - 1 })] : []),
    ...(options.versions ? [column('policy_version', 'VARCHAR', 'text', n)] : []),
  ];
  const profile: Profile = { rows: n, columns };
  const roles: ResolvedRoles = {
    decision_id: options.duplicates === undefined ? null : 'decision_id',
    time: days ? 'logged_at' : null,
    timeEncoding: days ? 'timestamp' : null,
    action: 'action',
    propensity: 'propensity',
    reward: 'reward',
    policy_version: options.versions ? 'policy_version' : null,
    target_propensity: null,
    propensity_vector: null,
    action_set_size: null,
    segments: segmentColumns,
    reasons: {},
  };
  const expressions: RowExpressions = {
    segments: segmentColumns.map((c) => `"${c}"`),
    action: '"action"',
    propensity: '"propensity"',
    reward: '"reward"',
    bucket: days ? `floor((epoch_us("logged_at") - ${ORIGIN_US}) / ${DAY_US})` : '0',
    timeUs: days ? 'epoch_us("logged_at")' : null,
    timeColumn: days ? '"logged_at"' : null,
    version: options.versions ? '"policy_version"' : null,
    targetPropensity: null,
    decisionId: options.duplicates === undefined ? null : '"decision_id"',
    dialect: duckdb,
  };
  const spec = { actionColumn: 'action', logColumns: columns.map((c) => c.name), targetColumn: null };
  const policies = options.targets?.length ? options.targets.map((t) => parseTarget(t, spec)) : resolveTargets([], spec, view.actions);
  const targets = policies.map((p) => analyseTarget(p, view));
  const tails = new Map<string, TargetTail>();
  for (const t of targets) tails.set(t.target.name, tailOf(rows, segmentColumns, t.q));
  const primaryTargets = targets.filter((t) => !t.target.implicit || t.target.kind === 'uniform');
  return { profile, roles, roleProblems: [], cells, view, segmentColumns, buckets, settings, targets, tails, duplicates: options.duplicates ?? null, nowUs: ORIGIN_US + 400 * DAY_US, rows: expressions, primaryTargets };
}

/** Every positive weight q/p of the rows, largest first, and the log10-weight histogram the tail query returns. */
function tailOf(rows: readonly Rows[], _columns: readonly string[], q: ((s: readonly string[], a: string) => number | undefined) | null): TargetTail {
  const weights: number[] = [];
  for (const g of rows) {
    const { p } = g;
    if (!q || p === null || !(p > 0 && p <= 1)) continue;
    const w = (q(g.segment ?? [], g.action) ?? 0) / p;
    if (w > 0) for (let i = 0; i < (g.count ?? 1); i++) weights.push(w);
  }
  weights.sort((a, b) => b - a);
  const bins = new Map<number, number>();
  for (const w of weights) {
    const b = Number((Math.round(Math.log10(w) / LOG10_BIN) * LOG10_BIN).toFixed(6));
    bins.set(b, (bins.get(b) ?? 0) + 1);
  }
  const keys = [...bins.keys()].sort((a, b) => a - b);
  return { weights, log10Bins: keys, counts: keys.map((k) => bins.get(k) as number) };
}

/** Rows of a segment × action grid with propensity p(segment, action) and a constant reward. */
export function grid(segments: readonly (readonly string[])[], actions: readonly string[], p: (s: readonly string[], a: string) => number, count: (s: readonly string[], a: string) => number, r = 0): Rows[] {
  return segments.flatMap((segment) => actions.map((action) => ({ segment, action, p: p(segment, action), count: count(segment, action), r })));
}
