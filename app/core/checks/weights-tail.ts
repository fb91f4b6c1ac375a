import { defineCheck, type CheckDefinition } from './define.ts';
import type { Status } from '../model/report.ts';
import { paretoKThreshold, psisKhatFromTail, psisTailLength } from '../stats/psis.ts';
import { finite, fmt, result, skipped, worst, type AuditContext, type DraftFinding } from './context.ts';
import type { TargetAnalysis } from '../targets/analysis.ts';
import { countText } from '../count-words.ts';

export interface TailSummary {
  /** null when not available, and when the tail is bounded (`bounded`: k̂ = −∞) */
  readonly khat: number | null;
  /**
   * The largest weights tie: the top M + 1 are equal, or at least a quarter of the M exceedances over the
   * cutoff are 0 (the generalized Pareto fit's first-quartile estimate is 0, Zhang & Stephens 2009). A tie at
   * the top means the weights are bounded there (k̂ = −∞): no heavy tail, so the tail passes and ESS decides.
   */
  readonly bounded: boolean;
  readonly threshold: number;
  readonly tailLength: number;
  readonly note: string | null;
}

/** PSIS k̂ of one target's weights from its largest weights (Vehtari et al. 2024; tail as loo 2.5.1). */
export function tailSummary(t: TargetAnalysis, tail: readonly number[] | undefined): TailSummary {
  const S = t.n;
  if (S < 2) return { khat: null, bounded: false, threshold: 0.7, tailLength: 0, note: 'fewer than 2 rows with a valid propensity' };
  const M = psisTailLength(S);
  const threshold = paretoKThreshold(S);
  if (!tail || tail.length < M + 1) return { khat: null, bounded: false, threshold, tailLength: M, note: `only ${tail?.length ?? 0} rows have positive weight; PSIS needs ${M + 1}` };
  const cutoff = tail[M] as number;
  const atCutoff = tail.slice(0, M).filter((w) => w === cutoff).length;
  if (M >= 1 && (tail[0] === cutoff || atCutoff >= Math.floor(M / 4 + 0.5))) return { khat: null, bounded: true, threshold, tailLength: M, note: 'the largest weights tie: the weights are bounded (k̂ = −∞)' };
  const khat = psisKhatFromTail(tail.slice(0, M + 1).map(Math.log), S);
  return { khat: finite(khat), bounded: false, threshold, tailLength: M, note: Number.isFinite(khat) ? null : 'the tail is too short for a Pareto fit' };
}

/** weights.tail: Pareto-smoothed importance sampling shape k̂ of each target's weight tail. */
function checkTail(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('weights.tail', 'the propensity, action or reward role is missing');
  const warnK = ctx.settings['weights.tail.warn_khat'];
  const findings: DraftFinding[] = [];
  const statuses: Status[] = [];
  const metrics: Record<string, number | string | null> = {};
  const summaries = new Map(ctx.targets.map((t) => [t, tailSummary(t, ctx.tails.get(t.target.name)?.weights)]));
  for (const t of ctx.targets) {
    const s = summaries.get(t) as TailSummary;
    const primary = ctx.primaryTargets.includes(t);
    const status: Status = s.bounded ? 'pass' : s.khat === null ? 'warn' : s.khat > s.threshold ? 'fail' : s.khat > warnK ? 'warn' : 'pass';
    if (primary) statuses.push(status);
    metrics[`${t.target.name}.khat`] = s.khat;
    if (s.bounded) metrics[`${t.target.name}.tail`] = 'bounded';
    findings.push({
      segment: {},
      target: t.target.name,
      status: primary ? status : 'pass',
      metrics: { khat: s.khat, bounded: s.bounded, threshold: s.threshold, tail_length: s.tailLength, rows: t.n },
      message: `${t.target.name}: k̂ = ${s.bounded ? 'bounded' : s.khat === null ? 'not available' : fmt(s.khat)} from the largest ${countText(s.tailLength)} weights (warn above ${warnK}, fail above ${fmt(s.threshold)})${s.note ? `; ${s.note}` : ''}${primary ? '' : ' (reference only)'}`,
    });
  }
  const status = statuses.length ? worst(...statuses) : 'pass';
  const summary = ctx.primaryTargets.map((t) => {
    const s = summaries.get(t) ?? tailSummary(t, ctx.tails.get(t.target.name)?.weights);
    return `${t.target.name}: k̂ = ${s.bounded ? 'bounded' : s.khat === null ? 'n/a' : fmt(s.khat)}`;
  }).join('; ') + ` (warn above ${warnK}, fail above min(1 − 1/log10 n, 0.7)).`;
  return result('weights.tail', status, summary, metrics, findings, ['weights.tail.warn_khat']);
}

export const weightsTail: CheckDefinition<'weights.tail'> = defineCheck('weights.tail', {
  title: 'Weight tail (PSIS k̂)', blocking: true, panel: 'weights', remedies: ['caps', 'plan'],
  settings: ['weights.tail.warn_khat'],
}, checkTail);
