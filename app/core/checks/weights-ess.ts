import { defineCheck, type CheckDefinition } from './define.ts';
import type { Series, Status } from '../model/report.ts';
import { kishEss } from '../stats/ess.ts';
import { segmentParts } from '../segment-map.ts';
import { describeSegment, fmt, pct, result, segmentRecord, skipped, worst, type AuditContext, type DraftFinding } from './context.ts';
import type { TargetAnalysis } from '../targets/analysis.ts';
import { countText as n_, counted } from '../count-words.ts';

export interface EssSummary {
  readonly ess: number;
  readonly fraction: number;
  readonly maxWeight: number;
  readonly top1Share: number | null;
}

/** Kish ESS, max weight and the share of Σw held by the top 1% of rows (from the tail query). */
export function essSummary(t: TargetAnalysis, tail: readonly number[] | undefined): EssSummary {
  const ess = kishEss(t.sumW, t.sumW2);
  const k = Math.ceil(0.01 * t.n);
  let top = 0;
  if (tail) for (let i = 0; i < Math.min(k, tail.length); i++) top += tail[i] as number;
  const maxWeight = tail && tail.length ? Math.max(t.maxWeight, tail[0] as number) : t.maxWeight;
  return { ess, fraction: t.n > 0 ? ess / t.n : 0, maxWeight, top1Share: tail && t.sumW > 0 && tail.length >= Math.min(k, t.n) ? top / t.sumW : null };
}

/** weights.ess: Kish effective sample size (Σw)²/Σw² per target, overall and by segment. */
function checkEss(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('weights.ess', 'the propensity, action or reward role is missing');
  const warnFrac = ctx.settings['weights.ess.warn_fraction'];
  const failMin = ctx.settings['weights.ess.fail_min'];
  const findings: DraftFinding[] = [];
  const statuses: Status[] = [];
  const metrics: Record<string, number | null> = {};
  for (const t of ctx.targets) {
    const s = essSummary(t, ctx.tails.get(t.target.name)?.weights);
    const status: Status = s.ess < failMin ? 'fail' : s.fraction < warnFrac ? 'warn' : 'pass';
    const primary = ctx.primaryTargets.includes(t);
    if (primary) statuses.push(status);
    metrics[`${t.target.name}.ess`] = s.ess;
    metrics[`${t.target.name}.ess_fraction`] = s.fraction;
    findings.push({
      segment: {},
      target: t.target.name,
      status: primary ? status : 'pass',
      metrics: { ess: s.ess, ess_fraction: s.fraction, max_weight: s.maxWeight, top1_weight_share: s.top1Share, rows: t.n },
      message: `${t.target.name}: ESS ${n_(Math.round(s.ess))} of ${counted(t.n, 'row')} (${pct(s.fraction)}); largest weight ${fmt(s.maxWeight)}${s.top1Share !== null ? `; the top 1% of rows hold ${pct(s.top1Share)} of the total weight` : ''}${primary ? '' : ' (shown for reference; not one of the audit\'s targets)'}`,
    });
    if (primary) {
      for (const seg of t.bySegment) {
        if (seg.mass <= 0 || seg.n === 0) continue;
        const e = seg.sumW2 > 0 ? kishEss(seg.sumW, seg.sumW2) : 0;
        if (e < failMin) {
          const segment = segmentRecord(ctx.segmentColumns, seg.segment);
          findings.push({ segment, target: t.target.name, status: 'warn', metrics: { ess: e, rows: seg.n }, message: `${t.target.name} in ${describeSegment(segment)}: ESS ${n_(Math.round(e))} of ${counted(seg.n, 'row')}, too few to estimate this segment alone` });
        }
      }
    }
  }
  const status = statuses.length ? worst(...statuses) : 'pass';
  const summary = ctx.primaryTargets.map((t) => {
    const s = essSummary(t, ctx.tails.get(t.target.name)?.weights);
    return `${t.target.name}: ESS ${n_(Math.round(s.ess))} (${pct(s.fraction)} of rows)`;
  }).join('; ') + ` (warn below ${pct(warnFrac)} of rows, fail below ${n_(failMin)}).`;
  const refs = ctx.targets;
  const series: Series[] = [
    { name: 'ESS share by target', kind: 'bars', x: refs.map((t) => t.target.name), values: [refs.map((t) => essSummary(t, ctx.tails.get(t.target.name)?.weights).fraction)], labels: ['ESS / n'], unit: 'share of rows' },
  ];
  for (const t of ctx.primaryTargets) {
    const tail = ctx.tails.get(t.target.name);
    if (tail && tail.counts.length) series.push({ name: `log10 weight: ${t.target.name}`, kind: 'histogram', x: [...tail.log10Bins], values: [[...tail.counts]], labels: ['rows'], unit: 'log10 w' });
    const segs = t.bySegment.filter((s) => s.n > 0);
    series.push({
      name: `ESS by segment: ${t.target.name}`,
      kind: 'bars',
      x: segs.map((s) => s.segment.join(' · ')),
      values: [segs.map((s) => (s.sumW2 > 0 ? kishEss(s.sumW, s.sumW2) : 0)), segs.map((s) => s.n)],
      labels: ['ESS', 'rows'],
      unit: 'rows',
      segment_keys: { axis: 'x', segments: segs.map((s) => segmentParts(ctx.segmentColumns, s.segment)) },
    });
  }
  return result('weights.ess', status, summary, metrics, findings, ['weights.ess.warn_fraction', 'weights.ess.fail_min'], series);
}

export const weightsEss: CheckDefinition<'weights.ess'> = defineCheck('weights.ess', {
  title: 'Effective sample size', blocking: true, panel: 'weights', remedies: ['caps', 'plan'],
  settings: ['weights.ess.warn_fraction', 'weights.ess.fail_min'],
}, checkEss);
