import normalQuantile from '@stdlib/stats-base-dists-normal-quantile';
import { compensatedSum } from './sum.ts';
import { kishEss } from './ess.ts';
import { requireCount, requireFinite, requireNonNegative } from './validate.ts';

/**
 * Clipped inverse propensity scoring, V̂_M = (1/n)·Σ min(wᵢ, M)·rᵢ over the n rewarded rows, with the
 * bias the cap can cause bounded by the clipped mass: with rewards in [r_min, r_max],
 * V − E[V̂_M] = E[(w − M)⁺·r] lies in [r_min·m, r_max·m], m = E[(w − M)⁺], estimated by (1/n)·Σ(wᵢ − M)⁺.
 * Source: Bottou et al. (2013), JMLR 14, "Counterfactual reasoning and learning systems", §4.5 (clipped weights,
 * the bound from the missing mass); the cap as in Ionides (2008), J. Comput. Graph. Stat. 17(2).
 *
 * The sums come from two places so that every total is the cube's exact one: the full sums over all rows
 * (Σwr, Σw²r², Σw, Σw²) and the rows whose weight exceeds the cap, which must all be present in `above`
 * (rows with w ≤ M may or may not be there). Then Σ min(w, M)·r = Σwr − Σ_{w>M}(w − M)·r, and likewise
 * for the squares.
 */
export interface ClipSums {
  /** rewarded rows (the estimate's n) */
  readonly n: number;
  /** Σwr and Σw²r² over the rewarded rows */
  readonly sumWR: number;
  readonly sumW2R2: number;
  /** Σw and Σw² over every valid-propensity row (for the clipped weights' ESS) */
  readonly sumW: number;
  readonly sumW2: number;
  /** every valid-propensity row with a weight above the smallest cap asked for: its weight, and its reward (null when it has none) */
  readonly above: readonly { readonly w: number; readonly r: number | null }[];
  readonly rewardMin: number;
  readonly rewardMax: number;
}

export interface ClippedEstimate {
  readonly cap: number;
  readonly value: number;
  readonly se: number;
  readonly ciLow: number;
  readonly ciHigh: number;
  /** Kish ESS (Σ min(w, M))² / Σ min(w, M)² over every valid-propensity row */
  readonly ess: number;
  /** rows whose weight the cap clips */
  readonly clippedRows: number;
  /** (1/n)·Σ(w − M)⁺ over the rewarded rows: the clipped mass m̂ */
  readonly clippedMass: number;
  /** the bias interval [r_min·m̂, r_max·m̂] of V − E[V̂_M], and its largest magnitude */
  readonly biasLow: number;
  readonly biasHigh: number;
  readonly biasBound: number;
  /** bias bound² + se²: the stated bound on the mean squared error */
  readonly mseBound: number;
}

const Z_975 = normalQuantile(0.975, 0, 1);

export function clippedIps(sums: ClipSums, cap: number): ClippedEstimate {
  requireCount('n', sums.n);
  if (sums.n < 2) throw new RangeError(`clippedIps: needs at least 2 rewarded rows, got ${sums.n}`);
  if (!(cap > 0) || !Number.isFinite(cap)) throw new RangeError(`clippedIps: the cap must be a finite number > 0, got ${cap}`);
  for (const [name, x] of [['sumWR', sums.sumWR], ['rewardMin', sums.rewardMin], ['rewardMax', sums.rewardMax]] as const) requireFinite(name, x);
  for (const [name, x] of [['sumW2R2', sums.sumW2R2], ['sumW', sums.sumW], ['sumW2', sums.sumW2]] as const) requireNonNegative(name, x);
  if (sums.rewardMin > sums.rewardMax) throw new RangeError(`clippedIps: rewardMin (${sums.rewardMin}) exceeds rewardMax (${sums.rewardMax})`);
  const dWR: number[] = [];
  const dW2R2: number[] = [];
  const dW: number[] = [];
  const dW2: number[] = [];
  const mass: number[] = [];
  for (const row of sums.above) {
    if (!(row.w > cap)) continue;
    dW.push(row.w - cap);
    dW2.push(row.w * row.w - cap * cap);
    if (row.r === null) continue;
    dWR.push((row.w - cap) * row.r);
    dW2R2.push((row.w * row.w - cap * cap) * row.r * row.r);
    mass.push(row.w - cap);
  }
  const n = sums.n;
  const s1 = sums.sumWR - compensatedSum(dWR);
  const s2 = Math.max(0, sums.sumW2R2 - compensatedSum(dW2R2));
  const value = s1 / n;
  const se = Math.sqrt(Math.max(0, (s2 - (s1 * s1) / n) / (n - 1)) / n);
  const m = compensatedSum(mass) / n;
  const biasLow = Math.min(sums.rewardMin * m, sums.rewardMax * m);
  const biasHigh = Math.max(sums.rewardMin * m, sums.rewardMax * m);
  const biasBound = Math.max(Math.abs(biasLow), Math.abs(biasHigh));
  const ess = kishEss(Math.max(0, sums.sumW - compensatedSum(dW)), Math.max(0, sums.sumW2 - compensatedSum(dW2)));
  return { cap, value, se, ciLow: value - Z_975 * se, ciHigh: value + Z_975 * se, ess, clippedRows: dW.length, clippedMass: m, biasLow, biasHigh, biasBound, mseBound: biasBound * biasBound + se * se };
}
