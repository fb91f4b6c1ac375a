/**
 * Plan the next log (README.md, "Remedies"): per segment, the least ε-greedy share η (every action then has
 * propensity at least η/K) for which the target's IPS estimate in that segment reaches a detectable difference δ
 * within the planned days at the segment's current traffic, the days it then needs, and what the exploration
 * costs in expected reward against the logging policy's own choices. Pure and fast: from the cube's cells only.
 *
 * With μ(a|s) the logging policy's share of action a in segment s (the cube's rows), the next logging policy is
 * μ′ = (1 − η)·μ + η/K, and one row's IPS term wr = π(a|s)·r/μ′(a|s) has variance
 *   σ²(η) = Σₐ π(a|s)²·E[r²|s, a]/μ′(a|s) − V(s)²,   V(s) = Σₐ π(a|s)·E[r|s, a]
 * (the IPS variance, Dudík, Langford & Li 2011, ICML, §2), so n = ((z₁₋α/₂ + z_power)·σ/δ)² = σ²/SE² rows reach δ
 * (app/core/stats/power.ts, normalSampleSize; SE = δ/(z₁₋α/₂ + z_power)). A pair never logged takes E[r²] = max(r_min², r_max²), E[r] the
 * middle of the range for V, and r_min for the cost (so the cost is an upper bound there).
 */
import { segmentKey, SEP } from '../cube/rollup.ts';
import { detectableMultiplier, twoProportionSampleSize } from '../stats/power.ts';
import type { CubeView, TargetAnalysis } from '../targets/analysis.ts';

export interface PlanCell {
  readonly action: string;
  /** the target's probability */
  readonly q: number;
  /** the logging policy's share of the segment's rows */
  readonly share: number;
  /** mean reward and mean squared reward, null when the pair has no rewarded row */
  readonly mean: number | null;
  readonly meanSquare: number | null;
}

export interface PlanSegment {
  readonly segment: readonly string[];
  /** rows per day now */
  readonly rowsPerDay: number;
  /** share of the log's rows */
  readonly weight: number;
  readonly minPropensity: number | null;
  readonly cells: readonly PlanCell[];
}

/** What the plan needs, computed once from the cube; the sliders then only re-run planNextLog. */
export interface PlanInputs {
  readonly target: string;
  readonly actions: readonly string[];
  readonly segmentColumns: readonly string[];
  readonly segments: readonly PlanSegment[];
  readonly logDays: number;
  readonly rewardMin: number;
  readonly rewardMax: number;
  /** the reward takes only the values 0 and 1 */
  readonly binary: boolean;
}

export interface PlanOptions {
  /** the detectable difference to reach */
  readonly delta: number;
  readonly power: number;
  readonly alpha: number;
  /** the days the next log may run */
  readonly days: number;
}

export interface PlanRow {
  /** segment values in segment-column order; empty for the whole log (one η everywhere) */
  readonly segment: readonly string[];
  readonly rowsPerDay: number;
  /** ε-greedy share η and the floor η/K it guarantees */
  readonly share: number;
  readonly floor: number;
  /** days at the current traffic for the estimate to reach δ with this share; null if no share can */
  readonly days: number | null;
  readonly rows: number | null;
  /** days ≤ the planned days */
  readonly reachable: boolean;
  /** expected reward lost per decision against the logging policy's own choices (negative: a gain) */
  readonly cost: number;
  /** the logging policy's own mean reward in the segment */
  readonly loggingValue: number | null;
  /** the standard deviation of one row's IPS term under the planned logging */
  readonly sd: number | null;
  readonly currentFloor: number | null;
}

export interface Plan {
  readonly options: PlanOptions;
  /** the standard error the estimate must reach: δ / (z₁₋α/₂ + z_power) */
  readonly targetSe: number;
  readonly overall: PlanRow;
  readonly segments: readonly PlanRow[];
  /** for a 0/1 reward: rows per arm of an on-policy A/B test that detects the same δ around the logging value (power.prop.test's formula) */
  readonly abRowsPerArm: number | null;
}

const STEPS = 1000;

export function planInputs(t: TargetAnalysis, view: CubeView, logDays: number, rewardMin: number, rewardMax: number): PlanInputs {
  const q = t.q;
  const byKey = new Map(view.cells.map((c) => [`${segmentKey(c.segment)}${SEP}${SEP}${c.action}`, c.totals]));
  const rows = Math.max(1, view.rows);
  let binary = true;
  const segments: PlanSegment[] = [];
  for (const seg of view.segments) {
    const key = segmentKey(seg.segment);
    if (q && q(seg.segment, t.actions[0] ?? '') === undefined) continue;
    const cells: PlanCell[] = t.actions.map((a) => {
      const x = byKey.get(`${key}${SEP}${SEP}${a}`);
      if (x && x.sumR2 !== x.sumR) binary = false;
      return {
        action: a,
        q: q ? q(seg.segment, a) ?? 0 : 0,
        share: x && seg.totals.nP > 0 ? x.nP / seg.totals.nP : 0,
        mean: x && x.nRw > 0 ? x.sumR / x.nRw : null,
        meanSquare: x && x.nRw > 0 ? x.sumR2 / x.nRw : null,
      };
    });
    segments.push({ segment: seg.segment, rowsPerDay: logDays > 0 ? seg.totals.n / logDays : 0, weight: seg.totals.n / rows, minPropensity: seg.totals.minP, cells });
  }
  if (rewardMin < 0 || rewardMax > 1) binary = false;
  return { target: t.target.name, actions: t.actions, segmentColumns: view.segmentColumns, segments, logDays, rewardMin, rewardMax, binary };
}

interface Moments {
  /** Σ π²·E[r²]/μ′ */
  readonly second: number;
  readonly value: number;
  readonly loggingValue: number | null;
  readonly cost: number;
}

function moments(s: PlanSegment, eta: number, k: number, inputs: PlanInputs): Moments {
  const fallbackSquare = Math.max(inputs.rewardMin ** 2, inputs.rewardMax ** 2);
  const middle = (inputs.rewardMin + inputs.rewardMax) / 2;
  let second = 0, value = 0, logging = 0, loggedShare = 0, uniform = 0;
  for (const c of s.cells) {
    const mu = (1 - eta) * c.share + eta / k;
    if (c.q > 0) second += mu > 0 ? (c.q * c.q * (c.meanSquare ?? fallbackSquare)) / mu : Infinity;
    value += c.q * (c.mean ?? middle);
    if (c.mean !== null) {
      logging += c.share * c.mean;
      loggedShare += c.share;
    }
    uniform += (c.mean ?? inputs.rewardMin) / k;
  }
  const loggingValue = loggedShare > 0 ? logging / loggedShare : null;
  return { second, value, loggingValue, cost: loggingValue === null ? 0 : eta * (loggingValue - uniform) };
}

function rowFor(segment: readonly string[], rowsPerDay: number, currentFloor: number | null, sd2: (eta: number) => number, cost: (eta: number) => number, loggingValue: number | null, k: number, targetSe: number, days: number): PlanRow {
  const needed = (eta: number) => {
    const v = sd2(eta);
    return Number.isFinite(v) ? Math.max(v, 0) / (targetSe * targetSe) : Infinity;
  };
  let chosen = -1;
  let bestEta = 0;
  let bestRows = Infinity;
  for (let j = 0; j <= STEPS; j++) {
    const eta = j / STEPS;
    const n = needed(eta);
    if (n < bestRows) {
      bestRows = n;
      bestEta = eta;
    }
    if (rowsPerDay > 0 && n / rowsPerDay <= days) {
      chosen = j;
      break;
    }
  }
  const eta = chosen >= 0 ? chosen / STEPS : bestEta;
  const n = needed(eta);
  const v = sd2(eta);
  return {
    segment,
    rowsPerDay,
    share: eta,
    floor: eta / k,
    days: Number.isFinite(n) && rowsPerDay > 0 ? n / rowsPerDay : null,
    rows: Number.isFinite(n) ? n : null,
    reachable: chosen >= 0,
    cost: cost(eta),
    loggingValue,
    sd: Number.isFinite(v) ? Math.sqrt(Math.max(0, v)) : null,
    currentFloor,
  };
}

/** The plan for one target: every segment on its own, and the whole log with one share η in every segment. */
export function planNextLog(inputs: PlanInputs, options: PlanOptions): Plan {
  if (!(options.delta > 0) || !Number.isFinite(options.delta)) throw new RangeError(`planNextLog: the detectable difference must be a number > 0, got ${options.delta}`);
  if (!(options.days > 0) || !Number.isFinite(options.days)) throw new RangeError(`planNextLog: the days must be a number > 0, got ${options.days}`);
  const targetSe = options.delta / detectableMultiplier(options.alpha, options.power);
  const k = Math.max(1, inputs.actions.length);
  const segments = inputs.segments.map((s) => {
    const base = moments(s, 0, k, inputs);
    return rowFor(s.segment, s.rowsPerDay, s.minPropensity, (eta) => {
      const m = moments(s, eta, k, inputs);
      return m.second - m.value * m.value;
    }, (eta) => moments(s, eta, k, inputs).cost, base.loggingValue, k, targetSe, options.days);
  });
  const total = inputs.segments.reduce((a, s) => a + s.weight, 0);
  const pooled = (eta: number) => {
    let second = 0, value = 0, cost = 0, logging = 0;
    for (const s of inputs.segments) {
      const m = moments(s, eta, k, inputs);
      const p = s.weight / total;
      second += p * m.second;
      value += p * m.value;
      cost += p * m.cost;
      logging += p * (m.loggingValue ?? 0);
    }
    return { second, value, cost, logging };
  };
  const perDay = inputs.segments.reduce((a, s) => a + s.rowsPerDay, 0);
  const overall = rowFor([], perDay, inputs.segments.reduce<number | null>((a, s) => (s.minPropensity === null ? a : a === null ? s.minPropensity : Math.min(a, s.minPropensity)), null), (eta) => {
    const m = pooled(eta);
    return m.second - m.value * m.value;
  }, (eta) => pooled(eta).cost, total > 0 ? pooled(0).logging : null, k, targetSe, options.days);
  let abRowsPerArm: number | null = null;
  const v = overall.loggingValue;
  if (inputs.binary && v !== null && v + options.delta < 1) {
    abRowsPerArm = twoProportionSampleSize(v, v + options.delta, { alpha: options.alpha, power: options.power });
  }
  return { options, targetSe, overall, segments, abRowsPerArm };
}
