/**
 * What would make this usable (README.md, "Remedies"): the remedies of one audit, from its context, the tails and
 * the clip rows. Each part is a pure function of its own file: region.ts (evaluate where the log supports it),
 * caps.ts (cap the weights), plan.ts (plan the next log); links.ts says which remedy addresses which check.
 */
import type { AuditContext } from '../checks/context.ts';
import { segmentRecord } from '../checks/context.ts';
import { estimatesFor } from '../checks/estimate-preview.ts';
import type { CapsRemedy, CheckResult, Estimate as ModelEstimate, PlanRowReport, Reason, Remedies, RestrictedRemedy } from '../model/report.ts';
import { SettingsError } from '../settings.ts';
import type { Estimate } from '../stats/estimators.ts';
import type { ClippedEstimate } from '../stats/clipped-ips.ts';
import type { TargetAnalysis } from '../targets/analysis.ts';
import { capsFor, type ClipRow } from './caps.ts';
import { REMEDIES_FOR } from '../checks/registry.ts';
import { planInputs, planNextLog, type PlanRow } from './plan.ts';
import { notCovered, restrictedEstimate, supportedRegion } from './region.ts';

export { REMEDIES_FOR } from '../checks/registry.ts';
export { REMEDY_KINDS, REMEDY_TITLES, type RemedyKind } from './links.ts';
export { supportedRegion, restrictedEstimate, notCovered, type SupportedRegion, type RestrictedEstimate, type ExcludedCell } from './region.ts';
export { capsFor, capGrid, canonicalRows, fullSums, type CapsInput, type CapsResult, type ClipRow } from './caps.ts';
export { planInputs, planNextLog, type Plan, type PlanInputs, type PlanOptions, type PlanRow } from './plan.ts';

/** The clip rows of one target (app/core/scan/rows.ts, clipRowsSql) and the weight above which they are complete. */
export interface TargetClips {
  readonly exactAbove: number;
  readonly rows: readonly ClipRow[];
  readonly maxWeight: number;
}

export const REMEDY_CAUTIONS: readonly string[] = [
  'A restricted estimate is the target\'s value where the log has support, not its value: it says nothing about the choices outside the region.',
  'A capped estimate is biased downwards in magnitude by up to its bias bound, which assumes rewards stay within the stated range.',
  'The plan assumes the next log\'s segments, traffic and mean rewards are like this one\'s, and that propensities are logged correctly.',
];

const NONE: ModelEstimate = { value: null, se: null, ci_low: null, ci_high: null };
const finite = (x: number) => (Number.isFinite(x) ? x : null);
function model(e: Estimate | null): ModelEstimate {
  return e ? { value: finite(e.value), se: finite(e.se), ci_low: finite(e.ciLow), ci_high: finite(e.ciHigh) } : NONE;
}

/** 'auto' or a number > 0 (a string setting read here, where its meaning is known). */
export function autoOrPositive(key: string, raw: number | string): number | 'auto' {
  if (raw === 'auto') return 'auto';
  const x = typeof raw === 'number' ? raw : Number(String(raw).trim());
  if (!(x > 0) || !Number.isFinite(x)) throw new SettingsError(`setting "${key}" must be 'auto' or a number > 0, got ${JSON.stringify(raw)}`);
  return x;
}

/** The reward range the bias bounds and the plan assume: the log's own (exact minimum and maximum of the profile). */
export function rewardRange(ctx: AuditContext): { min: number; max: number; source: string } | null {
  const col = ctx.profile.columns.find((c) => c.name === ctx.roles.reward);
  if (!col) return null;
  if (col.kind === 'boolean') return { min: 0, max: 1, source: 'a true/false reward' };
  if (col.min === null || col.max === null || !Number.isFinite(col.min) || !Number.isFinite(col.max)) return null;
  return { min: col.min, max: col.max, source: "the log's smallest and largest reward" };
}

function capReport(c: ClippedEstimate) {
  return {
    cap: c.cap,
    estimate: model({ value: c.value, se: c.se, ciLow: c.ciLow, ciHigh: c.ciHigh }),
    bias_bound: c.biasBound,
    bias_low: c.biasLow,
    bias_high: c.biasHigh,
    ess: c.ess,
    clipped_rows: c.clippedRows,
    clipped_mass: c.clippedMass,
    mse_bound: c.mseBound,
  };
}

export function planRow(target: string, columns: readonly string[], r: PlanRow): PlanRowReport {
  return {
    target,
    segment: segmentRecord(columns, r.segment),
    rows_per_day: r.rowsPerDay,
    share: r.share,
    floor: r.floor,
    days: r.days === null ? null : finite(r.days),
    rows: r.rows === null ? null : finite(r.rows),
    reachable: r.reachable,
    cost: r.cost,
    logging_value: r.loggingValue,
    sd: r.sd,
    current_floor: r.currentFloor,
  };
}

/** The rewarded rows every estimate divides by (as estimate.preview counts them). */
export function rewardedRowsOf(ctx: AuditContext): number {
  return ctx.cells.filter((c) => c.action !== '(null)').reduce((s, c) => s + c.nRw, 0);
}

/** The days the log spans, from its time buckets (null without a time role). */
export function logDaysOf(ctx: AuditContext): number | null {
  const b = ctx.buckets;
  return b && b.count > 0 ? (b.count * b.widthUs) / 86_400_000_000 : null;
}

export function remediesOf(ctx: AuditContext, clips: ReadonlyMap<string, TargetClips>): Remedies | undefined {
  if (!ctx.rows || ctx.cells.length === 0) return undefined;
  const s = ctx.settings;
  const range = rewardRange(ctx);
  const rewarded = rewardedRowsOf(ctx);
  const region = supportedRegion(ctx.view, s['support.floor.epsilon'], s['remedies.support.min_rows']);
  const listed = s['remedies.max_listed'];
  const deltaSetting = autoOrPositive('remedies.plan.delta', s['remedies.plan.delta']);
  const daysSetting = autoOrPositive('remedies.plan.days', s['remedies.plan.days']);
  const logDays = logDaysOf(ctx);
  const days = daysSetting === 'auto' ? logDays ?? 30 : daysSetting;
  const power = s['remedies.plan.power'];
  const alpha = s['remedies.plan.alpha'];
  const restricted: RestrictedRemedy[] = [];
  const caps: CapsRemedy[] = [];
  const plan: PlanRowReport[] = [];
  const deltas: Record<string, number | null> = {};
  for (const t of ctx.primaryTargets) {
    restricted.push(restrictedReport(t, ctx, region, rewarded, listed));
    caps.push(capsReport(t, clips.get(t.target.name), range, rewarded, s['remedies.caps.grid']));
    const detectable = estimatesFor(t, rewarded).detectable;
    const delta = deltaSetting === 'auto' ? (detectable !== null && detectable > 0 ? detectable / 2 : null) : deltaSetting;
    deltas[t.target.name] = delta;
    if (delta === null || !range || !t.q || logDays === null) continue;
    const p = planNextLog(planInputs(t, ctx.view, logDays, range.min, range.max), { delta, power, alpha, days });
    plan.push(planRow(t.target.name, ctx.segmentColumns, p.overall), ...p.segments.map((r) => planRow(t.target.name, ctx.segmentColumns, r)));
  }
  return {
    reward_range: range ?? { min: 0, max: 0, source: 'unknown: the reward column has no finite minimum and maximum' },
    plan_options: { delta: deltas, power, alpha, days, log_days: logDays },
    restricted,
    caps,
    plan,
    cautions: REMEDY_CAUTIONS,
  };
}

function restrictedReport(t: TargetAnalysis, ctx: AuditContext, region: ReturnType<typeof supportedRegion>, rewarded: number, listed: number): RestrictedRemedy {
  const r = restrictedEstimate(t, ctx.view, region, rewarded);
  const servedExcluded = t.q ? region.excluded.filter((c) => (t.q?.(c.segment, c.action) ?? 0) > 0) : region.excluded;
  return {
    target: t.target.name,
    epsilon: region.epsilon,
    min_rows: region.minRows,
    pairs: region.cells,
    excluded_count: region.excluded.length,
    excluded: region.excluded.slice(0, listed).map((c) => ({ segment: segmentRecord(ctx.segmentColumns, c.segment), action: c.action, reason: c.reason, rows: c.rows, min_propensity: c.minPropensity })),
    mass_inside: Number.isFinite(r.massInside) ? r.massInside : null,
    estimate: model(r.snips),
    ips: model(r.ips),
    snips: model(r.snips),
    dr: model(r.dr),
    variant: { method: "off-support mass moved to the logging policy's choice", estimate: model(r.variant.snips), ips: model(r.variant.ips), snips: model(r.variant.snips) },
    not_covered: notCovered(region, r.massInside) + (servedExcluded.length < region.excluded.length ? ` The target puts probability on ${servedExcluded.length} of those pairs.` : ''),
    notes: r.notes,
  };
}

function capsReport(t: TargetAnalysis, clip: TargetClips | undefined, range: { min: number; max: number } | null, rewarded: number, grid: number): CapsRemedy {
  const base = { target: t.target.name, exact_above: clip?.exactAbove ?? 0 };
  if (!clip) return { ...base, list: [], best: null, notes: ['no weights were listed for this target (fewer than 2 rows with a valid propensity)'] };
  if (!range) return { ...base, list: [], best: null, notes: ['the reward has no finite range, so the bias of a cap cannot be bounded'] };
  try {
    const r = capsFor(t, { rewardedRows: rewarded, rows: clip.rows, exactAbove: clip.exactAbove, maxWeight: clip.maxWeight, rewardMin: range.min, rewardMax: range.max, grid });
    return { ...base, list: r.caps.map(capReport), best: r.best ? capReport(r.best) : null, notes: [] };
  } catch (e) {
    return { ...base, list: [], best: null, notes: [(e as Error).message] };
  }
}

/** Each warning or failing reason and finding gets the remedies that address its check. */
export function linkRemedies(checks: readonly CheckResult[], reasons: readonly Reason[]): { checks: CheckResult[]; reasons: Reason[] } {
  return {
    checks: checks.map((c) => (c.findings.some((f) => f.status !== 'pass') ? { ...c, findings: c.findings.map((f) => (f.status === 'pass' ? f : { ...f, remedies: REMEDIES_FOR[c.id] })) } : c)),
    reasons: reasons.map((r) => ({ ...r, remedies: REMEDIES_FOR[r.check] })),
  };
}
