import { defineCheck, type CheckDefinition } from './define.ts';
import type { Estimate as ModelEstimate, Status } from '../model/report.ts';
import { doublyRobust, DR_MODEL, ips, minimumDetectableDifference, onPolicyValue, snips, type Estimate } from '../stats/estimators.ts';
import { fmt, pct, result, skipped, worst, type AuditContext, type DraftFinding } from './context.ts';
import type { TargetAnalysis } from '../targets/analysis.ts';

export interface TargetEstimates {
  readonly ips: ModelEstimate;
  readonly snips: ModelEstimate;
  readonly dr: ModelEstimate;
  readonly detectable: number | null;
  readonly notes: readonly string[];
}

const NONE: ModelEstimate = { value: null, se: null, ci_low: null, ci_high: null };

function model(e: Estimate): ModelEstimate {
  const f = (x: number) => (Number.isFinite(x) ? x : null);
  return { value: f(e.value), se: f(e.se), ci_low: f(e.ciLow), ci_high: f(e.ciHigh) };
}

function attempt(name: string, notes: string[], fn: () => Estimate): ModelEstimate {
  try {
    return model(fn());
  } catch (e) {
    notes.push(`${name}: ${(e as Error).message}`);
    return NONE;
  }
}

export function estimatesFor(t: TargetAnalysis, rewardedRows: number): TargetEstimates {
  const notes: string[] = [];
  const cells = t.estimatorCells;
  const i = attempt('IPS', notes, () => ips(cells, rewardedRows));
  const s = attempt('SNIPS', notes, () => snips(cells));
  let d = NONE;
  if (t.q && t.undefinedShare === 0) {
    const q = t.q;
    const bySeg = new Map<string, readonly string[]>();
    for (const c of t.bySegment) bySeg.set(c.segment.join('\u001f'), c.segment);
    d = attempt('DR', notes, () => doublyRobust(cells, (key, a) => q(bySeg.get(key) ?? key.split('\u001f'), a) ?? 0, t.actions));
  } else {
    notes.push(t.q ? 'DR: the target does not define every segment' : 'DR: a target column gives q only for the logged action, not the full distribution the direct-method term needs');
  }
  return { ips: i, snips: s, dr: d, detectable: s.se !== null ? minimumDetectableDifference(s.se) : i.se !== null ? minimumDetectableDifference(i.se) : null, notes };
}

/** estimate.preview: IPS, SNIPS, DR with 95% CIs per target, the on-policy value, and the detectable difference. */
function checkEstimates(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('estimate.preview', 'the propensity, action or reward role is missing');
  const t = ctx.view.total;
  if (t.nRAll < 2) return skipped('estimate.preview', 'fewer than 2 rows have a reward');
  const onPolicy = model(onPolicyValue(t.nRAll, t.sumRAll, t.sumR2All, { sumD: t.sumDAll, sumD2: t.sumD2All }));
  const maxRel = ctx.settings['estimate.preview.max_relative_halfwidth'];
  const rewarded = ctx.cells.filter((c) => c.action !== '(null)').reduce((s, c) => s + c.nRw, 0);
  const findings: DraftFinding[] = [];
  const statuses: Status[] = [];
  const metrics: Record<string, number | string | null> = { on_policy_value: onPolicy.value, on_policy_ci_low: onPolicy.ci_low, on_policy_ci_high: onPolicy.ci_high, rewarded_rows: rewarded, dr_model: DR_MODEL };
  for (const ta of ctx.targets) {
    const e = estimatesFor(ta, rewarded);
    const primary = ctx.primaryTargets.includes(ta);
    const half = e.snips.ci_high !== null && e.snips.ci_low !== null ? (e.snips.ci_high - e.snips.ci_low) / 2 : null;
    const ref = Math.abs(onPolicy.value ?? 0);
    const tooWide = half === null || (ref > 0 && half > maxRel * ref);
    const status: Status = tooWide ? 'warn' : 'pass';
    if (primary) statuses.push(status);
    metrics[`${ta.target.name}.snips`] = e.snips.value;
    const ci = (x: ModelEstimate) => (x.value === null ? 'n/a' : `${fmt(x.value)} [${fmt(x.ci_low)}, ${fmt(x.ci_high)}]`);
    findings.push({
      segment: {},
      target: ta.target.name,
      status: primary ? status : 'pass',
      metrics: { ips: e.ips.value, ips_se: e.ips.se, snips: e.snips.value, snips_se: e.snips.se, dr: e.dr.value, dr_se: e.dr.se, detectable_difference: e.detectable, relative_halfwidth: half !== null && ref > 0 ? half / ref : null },
      message: `${ta.target.name}: IPS ${ci(e.ips)}, SNIPS ${ci(e.snips)}, DR ${ci(e.dr)}; detectable difference ${fmt(e.detectable)}${tooWide && half !== null ? `; the CI half-width is ${pct(half / Math.max(ref, 1e-300), 0)} of the logging policy's value` : ''}${e.notes.length ? ` (${e.notes.join('; ')})` : ''}`,
    });
  }
  const status = statuses.length ? worst(...statuses) : 'pass';
  const summary = `Logging policy's own value ${fmt(onPolicy.value)} [${fmt(onPolicy.ci_low)}, ${fmt(onPolicy.ci_high)}]; ` + ctx.primaryTargets.map((ta) => {
    const m = findings.find((f) => f.target === ta.target.name)?.metrics;
    return `${ta.target.name}: SNIPS ${fmt((m?.snips as number | null) ?? null)} ± ${fmt(m?.snips_se != null ? 1.96 * Number(m.snips_se) : null)}`;
  }).join('; ') + '.';
  return result('estimate.preview', status, summary, metrics, findings, ['estimate.preview.max_relative_halfwidth']);
}

export const estimatePreview: CheckDefinition<'estimate.preview'> = defineCheck('estimate.preview', {
  title: 'Estimate preview', blocking: false, panel: 'estimates', remedies: ['caps', 'plan'],
  settings: ['estimate.preview.max_relative_halfwidth'],
}, checkEstimates);
