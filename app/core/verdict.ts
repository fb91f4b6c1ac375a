/** The verdict (README.md, "What the audit checks") and the per-segment readiness table. */
import type { CheckResult, Reason, SegmentReadiness, Verdict } from './model/report.ts';
import { BLOCKING } from './checks/registry.ts';
import { describeSegment, segmentRecord, type AuditContext } from './checks/context.ts';
import { explorationBySegment } from './checks/propensity-exploration.ts';
import { kishEss } from './stats/ess.ts';
import type { TargetAnalysis } from './targets/analysis.ts';

export { BLOCKING };

const RANK = { fail: 0, error: 1, warn: 2 } as const;

export function verdictOf(checks: readonly CheckResult[]): { verdict: Verdict; reasons: Reason[] } {
  const reasons: Reason[] = [];
  let blocked = false;
  let caveats = false;
  for (const c of checks) {
    if (c.status === 'fail' || c.status === 'error') {
      // a check that could not run cannot vouch for the log: when it decides the verdict, it blocks
      const blocking = BLOCKING.has(c.id);
      blocked ||= blocking;
      caveats ||= !blocking;
      reasons.push({ check: c.id, status: c.status, message: `${c.title}: ${c.summary}` });
    } else if (c.status === 'warn') {
      caveats = true;
      reasons.push({ check: c.id, status: 'warn', message: `${c.title}: ${c.summary}` });
    }
  }
  reasons.sort((a, b) => RANK[a.status] - RANK[b.status]);
  return { verdict: blocked ? 'not-supported' : caveats ? 'supported-with-caveats' : 'supported', reasons };
}

function matches(finding: Record<string, string>, columns: readonly string[], values: readonly string[]): boolean {
  return Object.entries(finding).every(([k, v]) => values[columns.indexOf(k)] === v);
}

export function readiness(ctx: AuditContext, checks: readonly CheckResult[]): SegmentReadiness[] {
  if (ctx.cells.length === 0) return [];
  const eps = ctx.settings['support.floor.epsilon'];
  const explored = new Map(explorationBySegment(ctx).map((e) => [e.segment.join('\u001f'), e]));
  const drift = checks.filter((c) => c.id === 'balance.weights' || c.id === 'drift.reward' || c.id === 'drift.policy');
  const byId = new Map(checks.map((c) => [c.id as string, c]));
  const rows = Math.max(1, ctx.view.rows);
  const bySegment = ctx.primaryTargets.map((t) => {
    const m = new Map<string, TargetAnalysis['bySegment'][number]>();
    for (const x of t.bySegment) {
      const k = x.segment.join('\u001f');
      if (!m.has(k)) m.set(k, x);
    }
    return m;
  });
  return ctx.view.segments.map((s) => {
    const key = s.segment.join('\u001f');
    const e = explored.get(key);
    const ess: Record<string, number> = {};
    for (const [i, t] of ctx.primaryTargets.entries()) {
      const seg = bySegment[i]?.get(key);
      ess[t.target.name] = seg && seg.sumW2 > 0 ? kishEss(seg.sumW, seg.sumW2) : 0;
    }
    const flags: string[] = [];
    for (const c of drift) {
      for (const f of c.findings) {
        if (f.status === 'pass' || Object.keys(f.segment).length === 0 || !matches(f.segment, ctx.segmentColumns, s.segment)) continue;
        const label = `${c.id}${f.action ? ` (${f.action})` : ''}${Object.keys(f.segment).length ? ` in ${describeSegment(f.segment)}` : ''}`;
        if (!flags.includes(label)) flags.push(label);
      }
    }
    const unexplored = e ? !e.explored : false;
    const served = ctx.primaryTargets.some((t) => t.serves(s.segment));
    const lowFloor = s.totals.minP !== null && s.totals.minP < eps;
    const status = unexplored && served ? 'fail' : unexplored || lowFloor || flags.length ? 'warn' : 'pass';
    const matching = (id: string) => (byId.get(id)?.findings ?? []).filter((f) => f.status !== 'pass' && Object.keys(f.segment).length > 0 && matches(f.segment, ctx.segmentColumns, s.segment));
    const causes: string[] = [];
    if (unexplored) {
      const f = matching('propensity.exploration')[0];
      causes.push(`not explored by the logging policy${f ? ` in ${describeSegment(f.segment)}` : ''}`);
    }
    if (lowFloor) {
      const f = matching('support.floor')[0];
      causes.push(`a propensity below ε = ${eps}${f ? ` (${f.action ? `${f.action} in ` : ''}${describeSegment(f.segment)})` : ''}`);
    }
    // one cause per located finding scope, naming every check that flags it (mis-logged propensities in a region
    // fail weight balance and shift the policy's action mix: one cause, not two)
    const scopes = new Map<string, string[]>();
    for (const c of drift) for (const f of matching(c.id)) {
      const scope = describeSegment(f.segment);
      const titles = scopes.get(scope) ?? [];
      if (!titles.includes(c.title.toLowerCase())) titles.push(c.title.toLowerCase());
      scopes.set(scope, titles);
    }
    for (const [scope, titles] of scopes) causes.push(`${titles.join(' and ')} in ${scope}`);
    return {
      segment: segmentRecord(ctx.segmentColumns, s.segment),
      rows: s.totals.n,
      share: s.totals.n / rows,
      explored: !unexplored,
      top_action_share: e?.topShare ?? 0,
      min_propensity: s.totals.minP,
      ess,
      drift_flags: flags.slice(0, 8),
      ...(causes.length ? { causes } : {}),
      status,
    };
  });
}

/** Each cause of the readiness table with how many segments it affects, most first (ties in first-seen order). */
export function readinessCauses(segments: readonly SegmentReadiness[]): { cause: string; segments: number }[] {
  const counts = new Map<string, number>();
  for (const s of segments) for (const c of s.causes ?? []) counts.set(c, (counts.get(c) ?? 0) + 1);
  return [...counts].map(([cause, n]) => ({ cause, segments: n })).sort((a, b) => b.segments - a.segments);
}
