/**
 * The remedies in plain lines, per target (README.md, "Remedies"): shared by the terminal summary and the HTML
 * report's "What would make this usable" section, so both say the same thing.
 */
import type { Remedies } from '../core/model/report.ts';
import { fmtInterval, fmtNumber, fmtShare } from './format.ts';

export interface RemedyLines {
  readonly target: string;
  readonly restricted: string | null;
  readonly caps: string | null;
  readonly plan: string | null;
}

export function remedyLines(remedies: Remedies): RemedyLines[] {
  const targets = [...new Set([...remedies.restricted.map((r) => r.target), ...remedies.caps.map((c) => c.target)])];
  return targets.map((target) => {
    const r = remedies.restricted.find((x) => x.target === target);
    const c = remedies.caps.find((x) => x.target === target);
    const p = remedies.plan.find((x) => x.target === target && Object.keys(x.segment).length === 0);
    const delta = remedies.plan_options.delta[target] ?? null;
    const restricted = r && r.mass_inside !== null
      ? `where the log supports it (${fmtShare(r.mass_inside)} of its mass, ${fmtNumber(r.excluded_count)} of ${fmtNumber(r.pairs)} pairs left out): SNIPS ${fmtNumber(r.estimate.value)} ${fmtInterval(r.estimate.ci_low, r.estimate.ci_high)}; supported variant ${fmtNumber(r.variant.estimate.value)} ${fmtInterval(r.variant.estimate.ci_low, r.variant.estimate.ci_high)}`
      : null;
    const b = c?.best;
    const caps = b
      ? `weights capped at ${fmtNumber(b.cap)} (least MSE bound): IPS ${fmtNumber(b.estimate.value)} ${fmtInterval(b.estimate.ci_low, b.estimate.ci_high)}, bias at most ${fmtNumber(b.bias_bound)}, ESS ${fmtNumber(Math.round(b.ess))}, ${fmtNumber(b.clipped_rows)} rows clipped`
      : null;
    const plan = p && delta !== null
      ? `next log: ε-greedy share ${fmtNumber(p.share)} (every propensity ≥ ${fmtNumber(p.floor)}) for ${p.days === null ? 'no finite number of' : fmtNumber(p.days)} days detects ${fmtNumber(delta)} at ${fmtShare(remedies.plan_options.power)} power${p.reachable ? '' : ` (more than the ${fmtNumber(remedies.plan_options.days)} days planned)`}; costs ${fmtNumber(p.cost)} reward per decision`
      : null;
    return { target, restricted, caps, plan };
  });
}
