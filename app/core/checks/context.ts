/** What every check receives: the scan results and settings. A check is (context) -> CheckResult. */
import type { CubeCell } from '../cube/types.ts';
import type { CheckId, CheckResult, Finding, Metrics, Series, Status } from '../model/report.ts';
import type { Totals } from '../cube/rollup.ts';
import type { ResolvedRoles, RoleProblem } from '../roles/roles.ts';
import { segmentAxis, segmentParts } from '../segment-map.ts';
import type { RowExpressions, TimeBuckets } from '../scan/expressions.ts';
import type { Profile } from '../scan/profile.ts';
import type { Duplicates } from '../scan/rows.ts';
import type { SettingKey, Settings } from '../settings.ts';
import type { CubeView, TargetAnalysis } from '../targets/analysis.ts';
import { countText } from '../count-words.ts';

export interface TargetTail {
  /** largest positive weights, descending */
  readonly weights: readonly number[];
  /** histogram of log10 w over all rows with positive weight */
  readonly log10Bins: readonly number[];
  readonly counts: readonly number[];
}

export interface AuditContext {
  readonly profile: Profile;
  readonly roles: ResolvedRoles;
  readonly roleProblems: readonly RoleProblem[];
  /** cube cells; empty when required roles are missing */
  readonly cells: readonly CubeCell[];
  readonly view: CubeView;
  readonly segmentColumns: readonly string[];
  readonly buckets: TimeBuckets | null;
  readonly settings: Settings;
  readonly targets: readonly TargetAnalysis[];
  readonly tails: ReadonlyMap<string, TargetTail>;
  readonly duplicates: Duplicates | null;
  /** audit start time, microseconds since the epoch (for "future" timestamps) */
  readonly nowUs: number;
  /** row expressions over the source (null when required roles are missing), for example-row predicates */
  readonly rows: RowExpressions | null;
  /** targets that decide statuses: the ones given, or uniform when none was given */
  readonly primaryTargets: readonly TargetAnalysis[];
}

/** A finding plus the predicate that selects its rows from the source (turned into `sql` and examples). */
export type DraftFinding = Finding & { readonly where?: string };

export function result(
  id: CheckId,
  status: Status,
  summary: string,
  metrics: Metrics,
  findings: readonly DraftFinding[],
  settingsUsed: readonly SettingKey[],
  series?: readonly Series[],
): CheckResult {
  // the title is the definition's, stamped by defineCheck's run (./define.ts)
  return { id, title: id, status, summary, metrics, findings, settings_used: settingsUsed, ...(series && series.length ? { series } : {}) };
}

/** What a capped finding list says about the findings it leaves out (see `notListed`). */
export interface NotListed {
  /** the sentence the check's summary ends with; '' when nothing was left out */
  readonly note: string;
  /** `{ findings_not_listed: n }` when n > 0, else `{}`: spread last into the check's metrics */
  readonly metrics: { readonly findings_not_listed?: number };
}

/**
 * The sentence and the metric for a finding list capped at `max` entries that left `leftOut` candidates off. A comparison reads
 * `findings_not_listed` so that a finding merely left off the list is not taken for a resolved one (app/core/compare/compare.ts).
 */
export function notListed(leftOut: number, max: number, what: string): NotListed {
  return leftOut > 0 ? { note: ` The findings list the first ${max} ${what}; ${leftOut} more are not listed.`, metrics: { findings_not_listed: leftOut } } : { note: '', metrics: {} };
}

export function skipped(id: CheckId, why: string, settingsUsed: readonly SettingKey[] = []): CheckResult {
  return result(id, 'skipped', `Skipped: ${why}.`, {}, [], settingsUsed);
}

/** The worst of several statuses (skipped counts as pass; error is handled by the verdict). */
export function worst(...statuses: Status[]): Status {
  if (statuses.includes('fail')) return 'fail';
  if (statuses.includes('warn')) return 'warn';
  return 'pass';
}

export function segmentRecord(columns: readonly string[], values: readonly string[]): Record<string, string> {
  const out: Record<string, string> = {};
  columns.forEach((c, i) => {
    const v = values[i];
    if (v !== undefined && v !== '*') out[c] = v;
  });
  return out;
}

export function describeSegment(segment: Record<string, string>): string {
  const parts = Object.entries(segment).map(([k, v]) => `${k}=${v}`);
  return parts.length ? parts.join(', ') : 'all rows';
}

export const pct = (x: number, digits = 1): string => {
  if (!Number.isFinite(x)) return String(x);
  const p = 100 * x;
  if (p !== 0 && Math.abs(p) < 0.1) return `${p.toPrecision(2)}%`;
  return `${p.toFixed(digits)}%`;
};

/** A number in a message: integers whole with a thousands separator ("2,020"), others to `digits` significant digits. */
export const fmt = (x: number | null, digits = 3): string => {
  if (x === null) return 'n/a';
  if (Number.isInteger(x)) return countText(x);
  const v = Number(x.toPrecision(digits));
  return Number.isInteger(v) && Math.abs(v) >= 1000 && Number.isSafeInteger(v) ? countText(v) : v.toString();
};

export function bucketWindow(b: TimeBuckets, from: number, toExclusive: number): { from: string; to: string } {
  return { from: isoUs(b.originUs + from * b.widthUs), to: isoUs(b.originUs + toExclusive * b.widthUs) };
}

export function isoUs(us: number): string {
  return new Date(Math.floor(us / 1000)).toISOString();
}

/** A time for people, to the minute, in UTC as every time of the report: "2026-03-17 06:00" (the caller says "UTC" once). */
export function timeText(us: number): string {
  return isoUs(us).slice(0, 16).replace('T', ' ');
}

/** Finite numbers only: JSON carries no NaN or Infinity. */
export function finite(x: number | null | undefined): number | null {
  return x === null || x === undefined || !Number.isFinite(x) ? null : x;
}

/** A segment × action heatmap of one cube statistic (rows: full segments, columns: actions). */
export function cellHeatmap(ctx: AuditContext, name: string, unit: string, value: (t: Totals) => number | null, empty: number | null): Series {
  const label = (segment: readonly string[]) => segment.join(' · ');
  const { labels: segs, keys } = segmentAxis('y', ctx.view.cells.map((c) => segmentParts(ctx.segmentColumns, c.segment)));
  const actions = ctx.view.actions;
  const idx = new Map(ctx.view.cells.map((c) => [`${label(c.segment)}|${c.action}`, value(c.totals)]));
  return { name, kind: 'heatmap', x: actions, y: segs, values: segs.map((s) => actions.map((a) => idx.get(`${s}|${a}`) ?? empty)), unit, segment_keys: keys };
}
