import { defineCheck, type CheckDefinition } from './define.ts';
import { segmentKey } from '../cube/rollup.ts';
import type { Status } from '../model/report.ts';
import { describeSegment, notListed, pct, result, segmentRecord, skipped, worst, type AuditContext, type DraftFinding } from './context.ts';
import { coverByPatterns } from './locate.ts';
import { counted } from '../count-words.ts';

const MAX_FINDINGS_PER_TARGET = 10;

/** support.target: share of each target's mass on cells the log never covers (Sachdeva, Su & Joachims 2020). */
function checkSupportTarget(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('support.target', 'the propensity, action or reward role is missing');
  const warnAt = ctx.settings['support.target.warn'];
  const failAt = ctx.settings['support.target.fail'];
  const findings: DraftFinding[] = [];
  const statuses: Status[] = [];
  const metrics: Record<string, number> = {};
  let leftOut = 0;
  for (const t of ctx.targets) {
    if (t.target.kind === 'column') continue;
    const primary = ctx.primaryTargets.includes(t);
    const status: Status = t.supportDeficit > failAt ? 'fail' : t.supportDeficit > warnAt ? 'warn' : 'pass';
    if (primary) statuses.push(status);
    metrics[`${t.target.name}.deficit`] = t.supportDeficit;
    if (t.unsupported.length === 0 && t.undefinedShare === 0) continue;
    const unsupportedKeys = new Set(t.unsupported.map((u) => `${segmentKey(u.segment)}|${u.action}`));
    const items = ctx.view.cells.map((c) => ({ values: [...c.segment, c.action], flagged: false, payload: { mass: 0 } }));
    for (const u of t.unsupported) items.push({ values: [...u.segment, u.action], flagged: true, payload: { mass: u.mass } });
    // the largest unsupported masses first, so that a capped list leaves out the smallest places
    const patterns = coverByPatterns(items.filter((i) => i.flagged || !unsupportedKeys.has(`${segmentKey(i.values.slice(0, -1))}|${i.values[i.values.length - 1]}`)))
      .map((p) => ({ ...p, mass: p.items.reduce((s, x) => s + x.mass, 0) }))
      .sort((a, b) => b.mass - a.mass);
    leftOut += Math.max(0, patterns.length - MAX_FINDINGS_PER_TARGET);
    for (const p of patterns.slice(0, MAX_FINDINGS_PER_TARGET)) {
      const mass = p.mass;
      const action = p.values[p.values.length - 1] as string;
      const segment = segmentRecord(ctx.segmentColumns, p.values.slice(0, -1));
      findings.push({
        segment,
        ...(action !== '*' ? { action } : {}),
        target: t.target.name,
        status: primary ? status : 'pass',
        metrics: { mass, cells: p.items.length },
        message: `${t.target.name} puts ${pct(mass, 2)} of its mass on ${action !== '*' ? action : 'actions'} in ${describeSegment(segment)}, which the log never shows with a valid propensity`,
      });
    }
    if (t.undefinedShare > 0) {
      findings.push({
        segment: {},
        target: t.target.name,
        status: primary ? status : 'pass',
        metrics: { undefined_share: t.undefinedShare, segments: t.undefinedSegments.length },
        message: `${t.target.name} does not define ${counted(t.undefinedSegments.length, 'segment')} of the log (${pct(t.undefinedShare, 2)} of rows), e.g. ${t.undefinedSegments.slice(0, 3).map((s) => describeSegment(segmentRecord(ctx.segmentColumns, s))).join('; ')}; counted as unsupported`,
      });
    }
  }
  const status = statuses.length ? worst(...statuses) : 'pass';
  const primaries = ctx.primaryTargets.filter((t) => t.target.kind !== 'column');
  if (primaries.length === 0) return skipped('support.target', 'only column targets were given; their support is covered by weights.ess', ['support.target.warn', 'support.target.fail']);
  const left = notListed(leftOut, MAX_FINDINGS_PER_TARGET, 'places per target, largest mass first');
  const summary = primaries.map((t) => `${t.target.name}: ${pct(t.supportDeficit, 2)} of its mass is unsupported`).join('; ') + ` (warn above ${pct(warnAt)}, fail above ${pct(failAt)}).` + left.note;
  return result('support.target', status, summary, { ...metrics, ...left.metrics }, findings, ['support.target.warn', 'support.target.fail']);
}

export const supportTarget: CheckDefinition<'support.target'> = defineCheck('support.target', {
  title: 'Support for each target', blocking: true, panel: 'weights', remedies: ['restricted', 'plan'],
  settings: ['support.target.warn', 'support.target.fail'],
}, checkSupportTarget);
