/**
 * compareReports(baseline, current): what changed between two audits (contract in ./contract.ts). Pure: both
 * reports are validated by the caller. Things are matched by what they are, never by position: checks by id,
 * targets by name, segments by their values, findings by check, segment, action, target and scope, and
 * windowed findings by the overlap of their time windows (see ./match.ts).
 */
import type { CheckResult, Estimate, Finding, Metrics, Report, SegmentReadiness, TargetSummary, Verdict } from '../model/report.ts';
import { twoSampleZ } from '../stats/two-sample-z.ts';
import {
  COMPARISON_SCHEMA_ID, type Change, type CheckChange, type Comparison, type ComparabilityIssue, type EstimateChange,
  type FindingChange, type Headline, type MetricDelta, type SegmentChange, type Side, type TargetChange, type ValueDelta,
} from './contract.ts';
import { logSpan, matchFindings, segmentKey, type Span } from './match.ts';

/** Two-sided level at which two estimates are said to differ (common practice). */
const DEFAULT_ALPHA = 0.05;

export interface CompareOptions {
  readonly alpha?: number;
  /** The comparing tool's version (defaults to the current report's). */
  readonly toolVersion?: string;
}

const VERDICT_RANK: Record<Verdict, number> = { 'supported': 0, 'supported-with-caveats': 1, 'not-supported': 2 };
/** Ordered statuses; `skipped` and statuses this version does not know cannot be ordered against others. */
const STATUS_RANK: Record<string, number> = { pass: 0, warn: 1, fail: 2, error: 3 };

function rankChange(a: number | undefined, b: number | undefined): Change {
  if (a === undefined || b === undefined) return 'changed';
  return a === b ? 'same' : b > a ? 'worse' : 'better';
}

function statusChange(a: string | null, b: string | null): Change {
  if (a === null && b === null) return 'same';
  if (a === null) return 'added';
  if (b === null) return 'removed';
  if (a === b) return 'same';
  return rankChange(STATUS_RANK[a], STATUS_RANK[b]);
}

const isNumber = (x: unknown): x is number => typeof x === 'number' && Number.isFinite(x);

function valueDelta(a: number | null | undefined, b: number | null | undefined): ValueDelta {
  const baseline = isNumber(a) ? a : null;
  const current = isNumber(b) ? b : null;
  return { baseline, current, delta: baseline !== null && current !== null ? current - baseline : null };
}

function metricDeltas(a: Metrics | undefined, b: Metrics | undefined): MetricDelta[] {
  const names = [...new Set([...Object.keys(a ?? {}), ...Object.keys(b ?? {})])];
  return names.map((name) => {
    const baseline = a?.[name] ?? null;
    const current = b?.[name] ?? null;
    return { name, baseline, current, delta: isNumber(baseline) && isNumber(current) ? current - baseline : null };
  });
}

function side(report: Report): Side {
  const span = logSpan(report);
  return {
    files: report.input.files.map((f) => ({ path: f.path, sha256: f.sha256 })),
    rows: report.input.rows,
    tool_version: report.tool.version,
    started_at: report.run.started_at,
    verdict: report.verdict,
    span: span ? { from: new Date(span.from).toISOString(), to: new Date(span.to).toISOString() } : null,
  };
}

const describeSegment = (segment: Record<string, string>): string => {
  const parts = Object.entries(segment).map(([k, v]) => `${k}=${v}`);
  return parts.length ? parts.join(', ') : 'all rows';
};

function rolesWithoutReasons(report: Report): string {
  const { reasons: _reasons, ...roles } = report.roles;
  return JSON.stringify(roles);
}

function comparability(a: Report, b: Report, spanA: Span | null, spanB: Span | null): ComparabilityIssue[] {
  const issues: ComparabilityIssue[] = [];
  const hashes = (r: Report) => r.input.files.map((f) => f.sha256).sort().join(',');
  if (hashes(a) === hashes(b)) {
    issues.push({ kind: 'same-log', message: 'Both reports audit the same log (identical SHA-256): any difference comes from the options or the tool, not the data.' });
  } else if (spanA && spanB && spanA.from < spanB.to && spanB.from < spanA.to) {
    issues.push({
      kind: 'overlapping-logs',
      message: `The two logs overlap in time (${new Date(Math.max(spanA.from, spanB.from)).toISOString()} to ${new Date(Math.min(spanA.to, spanB.to)).toISOString()}): `
        + 'decisions may be counted in both, so their estimates are not independent and the difference test overstates its confidence.',
    });
  }
  if (a.tool.version !== b.tool.version) {
    issues.push({ kind: 'tool-version', message: `Different tool versions: ${a.tool.version} then ${b.tool.version}; a check may have changed between them.` });
  }
  if (rolesWithoutReasons(a) !== rolesWithoutReasons(b)) {
    const keys = Object.keys(a.roles).filter((k) => k !== 'reasons' && JSON.stringify((a.roles as Record<string, unknown>)[k]) !== JSON.stringify((b.roles as Record<string, unknown>)[k]));
    issues.push({ kind: 'roles', message: `Different column roles: ${keys.map((k) => `${k} ${JSON.stringify((a.roles as Record<string, unknown>)[k])} then ${JSON.stringify((b.roles as Record<string, unknown>)[k])}`).join('; ')}.` });
  }
  const targetsA = a.targets.map((t) => t.name).sort();
  const targetsB = b.targets.map((t) => t.name).sort();
  if (targetsA.join('\n') !== targetsB.join('\n')) {
    const only = (x: string[], y: string[]) => x.filter((n) => !y.includes(n));
    const parts = [only(targetsA, targetsB).length ? `only in the baseline: ${only(targetsA, targetsB).join(', ')}` : '', only(targetsB, targetsA).length ? `only in the current report: ${only(targetsB, targetsA).join(', ')}` : ''].filter(Boolean);
    issues.push({ kind: 'targets', message: `Different target policies (${parts.join('; ')}).` });
  }
  const settingKeys = [...new Set([...Object.keys(a.settings), ...Object.keys(b.settings)])].sort();
  const changed = settingKeys.filter((k) => a.settings[k]?.value !== b.settings[k]?.value);
  if (changed.length) {
    issues.push({ kind: 'settings', message: `Different settings or thresholds: ${changed.map((k) => `${k} ${JSON.stringify(a.settings[k]?.value ?? null)} then ${JSON.stringify(b.settings[k]?.value ?? null)}`).join('; ')}.` });
  }
  const ids = (r: Report) => r.checks.map((c) => c.id).sort().join(',');
  if (ids(a) !== ids(b)) issues.push({ kind: 'checks', message: 'The reports ran different sets of checks.' });
  return issues;
}

function compareChecks(a: Report, b: Report): CheckChange[] {
  const byId = (r: Report) => new Map(r.checks.map((c) => [c.id as string, c]));
  const ma = byId(a);
  const mb = byId(b);
  const ids = [...new Set([...ma.keys(), ...mb.keys()])];
  return ids.map((id) => {
    const ca: CheckResult | undefined = ma.get(id);
    const cb: CheckResult | undefined = mb.get(id);
    return {
      id,
      title: (cb ?? ca)!.title,
      baseline: ca?.status ?? null,
      current: cb?.status ?? null,
      change: statusChange(ca?.status ?? null, cb?.status ?? null),
      metrics: metricDeltas(ca?.metrics, cb?.metrics),
    };
  });
}

/** The metric that says how big a finding of each check is; others use `rows`, then their first number. */
const SIZE_METRIC: Record<string, string> = {
  'identity.duplicates': 'extra_rows',
  'propensity.range': 'invalid_rows',
  'propensity.exploration': 'rows',
  'support.floor': 'rows_below_floor',
  'support.target': 'mass',
  'balance.weights': 'balance',
  'weights.ess': 'ess',
  'weights.tail': 'khat',
  'reward.validity': 'missing',
  'drift.reward': 'relative_change',
  'drift.policy': 'psi',
  'estimate.preview': 'relative_halfwidth',
};

function sizeMetric(check: string, findings: readonly (Finding | undefined)[]): string {
  const preferred = SIZE_METRIC[check];
  if (preferred && findings.some((f) => f && preferred in f.metrics)) return preferred;
  if (findings.some((f) => f && 'rows' in f.metrics)) return 'rows';
  for (const f of findings) {
    const first = f && Object.entries(f.metrics).find(([, v]) => isNumber(v));
    if (first) return first[0];
  }
  return 'rows';
}

function findingSide(f: Finding | undefined, metric: string): FindingChange['baseline'] {
  if (!f) return null;
  const size = f.metrics[metric];
  return {
    status: f.status,
    ...(f.window ? { window: f.window } : {}),
    size: isNumber(size) ? size : null,
    message: f.message,
    metrics: f.metrics,
    ...(f.sql !== undefined ? { sql: f.sql } : {}),
  };
}

/** Whether the report's check left findings off its capped list (the check's `findings_not_listed` metric). */
function leftOffList(report: Report, check: string): boolean {
  const n = report.checks.find((c) => c.id === check)?.metrics.findings_not_listed;
  return typeof n === 'number' && n > 0;
}

function compareFindings(a: Report, b: Report, spanA: Span | null, spanB: Span | null): FindingChange[] {
  const pairs = matchFindings(a, b, spanA, spanB);
  return pairs.map(({ check, baseline: fa, current: fb }) => {
    const located = (fb ?? fa)!;
    const scope = typeof located.metrics.scope === 'string' ? located.metrics.scope : undefined;
    const metric = sizeMetric(check, [fa, fb]);
    // a finding missing on one side is new or resolved only if that side's check listed every finding it had
    const state = fa && fb ? 'persisting' : fa ? (leftOffList(b, check) ? 'unlisted' : 'resolved') : leftOffList(a, check) ? 'unlisted' : 'new';
    const change: Change = state === 'new' ? 'added' : state === 'resolved' ? 'removed' : state === 'unlisted' ? 'changed' : statusChange(fa!.status, fb!.status);
    const regression = (state === 'new' && fb!.status === 'fail') || (state === 'persisting' && change === 'worse' && fb!.status === 'fail');
    return {
      check,
      segment: located.segment,
      ...(located.action !== undefined ? { action: located.action } : {}),
      ...(located.target !== undefined ? { target: located.target } : {}),
      ...(scope !== undefined ? { scope } : {}),
      state,
      change,
      size_metric: metric,
      baseline: findingSide(fa, metric),
      current: findingSide(fb, metric),
      regression,
    };
  });
}

function estimateChange(ea: Estimate, eb: Estimate, alpha: number): EstimateChange {
  const test = twoSampleZ(ea.value, ea.se, eb.value, eb.se);
  return {
    baseline: ea,
    current: eb,
    difference: isNumber(ea.value) && isNumber(eb.value) ? eb.value - ea.value : null,
    se: test?.se ?? null,
    z: test?.z ?? null,
    p_value: test?.pValue ?? null,
    differs: test !== null && test.pValue < alpha,
  };
}

function compareTargets(a: Report, b: Report, alpha: number): TargetChange[] {
  const ma = new Map(a.targets.map((t) => [t.name, t]));
  const mb = new Map(b.targets.map((t) => [t.name, t]));
  const names = [...new Set([...ma.keys(), ...mb.keys()])];
  return names.map((name) => {
    const ta: TargetSummary | undefined = ma.get(name);
    const tb: TargetSummary | undefined = mb.get(name);
    const both = ta !== undefined && tb !== undefined;
    return {
      name,
      presence: both ? 'both' : ta ? 'baseline only' : 'current only',
      ess: valueDelta(ta?.ess, tb?.ess),
      ess_fraction: valueDelta(ta?.ess_fraction, tb?.ess_fraction),
      khat: valueDelta(ta?.khat, tb?.khat),
      support_deficit: valueDelta(ta?.support_deficit, tb?.support_deficit),
      max_weight: valueDelta(ta?.max_weight, tb?.max_weight),
      ips: both ? estimateChange(ta.ips, tb.ips, alpha) : null,
      snips: both ? estimateChange(ta.snips, tb.snips, alpha) : null,
      dr: both ? estimateChange(ta.dr, tb.dr, alpha) : null,
    };
  });
}

function compareSegments(a: Report, b: Report): SegmentChange[] {
  const ma = new Map(a.segments.map((s) => [segmentKey(s.segment), s]));
  const mb = new Map(b.segments.map((s) => [segmentKey(s.segment), s]));
  const keys = [...new Set([...ma.keys(), ...mb.keys()])];
  return keys.map((key) => {
    const sa: SegmentReadiness | undefined = ma.get(key);
    const sb: SegmentReadiness | undefined = mb.get(key);
    const change = statusChange(sa?.status ?? null, sb?.status ?? null);
    return {
      segment: (sb ?? sa)!.segment,
      baseline: sa?.status ?? null,
      current: sb?.status ?? null,
      change,
      rows: valueDelta(sa?.rows, sb?.rows),
      explored: { baseline: sa?.explored ?? null, current: sb?.explored ?? null },
      regression: (change === 'worse' || change === 'added') && sb?.status === 'fail',
    };
  });
}

const fmt = (x: number | null): string => (x === null ? 'n/a' : Math.abs(x) >= 1000 ? Math.round(x).toLocaleString('en') : Number(x.toPrecision(3)).toString());

function findingWords(f: FindingChange): string {
  const where = [describeSegment(f.segment), f.action ? `action ${f.action}` : '', f.target ? `target ${f.target}` : '', f.scope ? `by ${f.scope}` : ''].filter(Boolean).join(', ');
  return `${f.check} (${where})`;
}

function headlines(verdict: Comparison['verdict'], checks: CheckChange[], findings: FindingChange[], segments: SegmentChange[], targets: TargetChange[]): { worse: Headline[]; better: Headline[] } {
  const worse: Headline[] = [];
  const better: Headline[] = [];
  if (verdict.change === 'worse') worse.push({ kind: 'verdict', regression: true, message: `Verdict went from ${verdict.baseline} to ${verdict.current}.` });
  if (verdict.change === 'better') better.push({ kind: 'verdict', regression: false, message: `Verdict went from ${verdict.baseline} to ${verdict.current}.` });
  for (const c of checks) {
    const line = { kind: 'check' as const, check: c.id, message: `${c.title} (${c.id}): ${c.baseline ?? 'absent'} → ${c.current ?? 'absent'}.` };
    if (c.change === 'worse') worse.push({ ...line, regression: true });
    if (c.change === 'better') better.push({ ...line, regression: false });
  }
  for (const f of findings) {
    const locate = { check: f.check, segment: f.segment, ...(f.action !== undefined ? { action: f.action } : {}), ...(f.target !== undefined ? { target: f.target } : {}) };
    const size = `${f.size_metric} ${fmt(f.baseline?.size ?? null)} → ${fmt(f.current?.size ?? null)}`;
    if (f.state === 'new' && f.current!.status !== 'pass') {
      worse.push({ kind: 'finding', ...locate, regression: f.regression, message: `New ${f.current!.status} finding: ${findingWords(f)} — ${f.current!.message}` });
    } else if (f.state === 'resolved' && f.baseline!.status !== 'pass') {
      better.push({ kind: 'finding', ...locate, regression: false, message: `Resolved: ${findingWords(f)} — was ${f.baseline!.status}: ${f.baseline!.message}` });
    } else if (f.state === 'persisting' && f.change === 'worse') {
      worse.push({ kind: 'finding', ...locate, regression: f.regression, message: `Worse: ${findingWords(f)} ${f.baseline!.status} → ${f.current!.status} (${size}).` });
    } else if (f.state === 'persisting' && f.change === 'better') {
      better.push({ kind: 'finding', ...locate, regression: false, message: `Better: ${findingWords(f)} ${f.baseline!.status} → ${f.current!.status} (${size}).` });
    }
  }
  for (const s of segments) {
    if (s.change !== 'worse' && s.change !== 'better') continue;
    const line = { kind: 'segment' as const, segment: s.segment, message: `Segment ${describeSegment(s.segment)}: ${s.baseline} → ${s.current}${s.explored.baseline && s.explored.current === false ? ' (no longer explored)' : ''}.` };
    if (s.change === 'worse') worse.push({ ...line, regression: s.regression });
    else better.push({ ...line, regression: false });
  }
  for (const t of targets) {
    for (const kind of ['ips', 'snips', 'dr'] as const) {
      const e = t[kind];
      if (!e?.differs) continue;
      // A moved estimate is news, not a defect: listed under worse only when it fell, and never a regression on its own.
      const line = { kind: 'estimate' as const, target: t.name, regression: false, message: `${kind.toUpperCase()} for ${t.name} moved from ${fmt(e.baseline.value)} to ${fmt(e.current.value)} (z = ${fmt(e.z)}, p = ${fmt(e.p_value)}), beyond the two estimates' combined uncertainty.` };
      (e.difference !== null && e.difference < 0 ? worse : better).push(line);
    }
  }
  return { worse, better };
}

export function compareReports(baseline: Report, current: Report, options: CompareOptions = {}): Comparison {
  const alpha = options.alpha ?? DEFAULT_ALPHA;
  const spanA = logSpan(baseline);
  const spanB = logSpan(current);
  const issues = comparability(baseline, current, spanA, spanB);
  const verdict = { baseline: baseline.verdict, current: current.verdict, change: rankChange(VERDICT_RANK[baseline.verdict], VERDICT_RANK[current.verdict]) };
  const checks = compareChecks(baseline, current);
  const findings = compareFindings(baseline, current, spanA, spanB);
  const targets = compareTargets(baseline, current, alpha);
  const segments = compareSegments(baseline, current);
  const { worse, better } = headlines(verdict, checks, findings, segments, targets);
  const movedEstimates = targets.reduce((n, t) => n + [t.ips, t.snips, t.dr].filter((e) => e?.differs).length, 0);
  return {
    schema: COMPARISON_SCHEMA_ID,
    tool: { name: 'counterweight', version: options.toolVersion ?? current.tool.version },
    baseline: side(baseline),
    current: side(current),
    comparable: issues.every((i) => i.kind === 'same-log'),
    issues,
    verdict,
    alpha,
    worse,
    better,
    regression: worse.some((h) => h.regression),
    checks,
    findings,
    targets,
    segments,
    counts: {
      new_findings: findings.filter((f) => f.state === 'new').length,
      resolved_findings: findings.filter((f) => f.state === 'resolved').length,
      persisting_findings: findings.filter((f) => f.state === 'persisting').length,
      unlisted_findings: findings.filter((f) => f.state === 'unlisted').length,
      changed_checks: checks.filter((c) => c.change !== 'same').length,
      changed_segments: segments.filter((s) => s.change !== 'same').length,
      moved_estimates: movedEstimates,
    },
  };
}

/** Anything at all changed (for --fail-on any-change): a status, a finding, a segment's readiness or an estimate beyond its uncertainty. */
export function anyChange(c: Comparison): boolean {
  return c.verdict.change !== 'same' || c.counts.new_findings > 0 || c.counts.resolved_findings > 0 || c.counts.changed_checks > 0
    || c.counts.changed_segments > 0 || c.counts.moved_estimates > 0 || c.findings.some((f) => f.change !== 'same');
}
