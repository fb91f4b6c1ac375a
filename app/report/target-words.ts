/**
 * What each cell of a targets table says, from the report (no statistic computed here): the app's Weights screen
 * and the HTML report's targets table use the same words, each with its own number format.
 */
import type { Report, TargetSummary } from '../core/model/report.ts';

export interface WeightsRow {
  readonly target: TargetSummary;
  /** the spec under the name, only where it says more than the name (always:a is named by its own spec) */
  readonly spec: string | null;
  /** k̂ in words, with the fail limit it is held to */
  readonly khat: string;
  /** why k̂ has no value, when it has none */
  readonly khatNote: string | null;
}

/**
 * weights.tail's finding per target says whether a missing k̂ is a bounded tail (the largest weights tie, k̂ = −∞,
 * app/core/checks/weights-tail.ts) or a tail too short to fit; the number in brackets is the fail limit
 * min(1 − 1/log10 n, 0.7) (app/core/stats/psis.ts, paretoKThreshold).
 */
export function weightsRows(report: Report, formatValue: (x: number) => string): WeightsRow[] {
  const tail = report.checks.find((c) => c.id === 'weights.tail');
  return report.targets.map((t) => {
    const bounded = tail?.findings.find((f) => f.target === t.name)?.metrics.bounded === true;
    const limit = `fail above ${formatValue(t.khat_threshold)}`;
    const khatNote = t.khat !== null ? null : bounded
      ? `The largest weights tie, so the weights are bounded (k̂ = −∞): no heavy tail; ${limit}.`
      : `Too few positive weights to fit a Pareto tail to the largest ${formatValue(t.tail_length)}; ${limit}.`;
    return {
      target: t,
      spec: t.spec === t.name ? null : t.spec,
      khat: t.khat !== null ? `${formatValue(t.khat)} (${limit})` : `${bounded ? 'bounded' : 'not available'} (${limit})`,
      khatNote,
    };
  });
}
