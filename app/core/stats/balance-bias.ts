import { normalCdf } from './distributions.ts';
import { requireNonNegative } from './validate.ts';

/**
 * Largest bias a weight-balance deviation B ≠ 1 can put into a target's IPS estimate: |B − 1|·m·R, with m the
 * target's probability mass on the group's rows of the action ((1/N) Σ_{i ∈ group} π(a|x_i), a share of all N
 * rows) and R a bound on |r|. Source: Dudík, Langford & Li (2011), ICML, Theorem 1: with a multiplicative
 * propensity error δ = 1 − μ/p̂ the bias of IPS is E_x[Σ_a π(a|x) r(x, a) δ(x, a)] (and of DR the same with r
 * replaced by the reward model's error, which the reward's range bounds), and E[B] − 1 = E[μ/p̂] − 1 = −E[δ]
 * over the group (stated from memory of the paper).
 */
export function balanceBiasBound(balance: number, mass: number, rewardScale: number): number {
  requireNonNegative('balance B', balance);
  requireNonNegative('target mass', mass);
  requireNonNegative('reward scale', rewardScale);
  return Math.abs(balance - 1) * mass * rewardScale;
}

/**
 * The bound R on the reward's size that balanceBiasBound uses, from its range [min, max]: max(|min|, |max|)
 * bounds |r| for IPS, and max − min bounds a reward model's error for DR and a residual for SNIPS. Null when
 * the range is unknown or R = 0 (a reward that is 0 on every row gives no scale).
 */
export function rewardScale(min: number | null, max: number | null): number | null {
  if (min === null || max === null || !Number.isFinite(min) || !Number.isFinite(max) || max < min) return null;
  const r = Math.max(Math.abs(min), Math.abs(max), max - min);
  return r > 0 ? r : null;
}

/**
 * Chance that a nominal two-sided 95% normal interval misses the true value when the estimate carries a bias
 * of b standard errors: Φ(−1.96 − b) + Φ(−1.96 + b). Source: Cochran (1977), Sampling Techniques, 3rd ed.,
 * §1.8, "The effect of bias on errors in estimation" (0.0511 at b = 0.1, 0.0546 at 0.2, 0.170 at 1.0).
 */
export function missRateWithBias(b: number): number {
  requireNonNegative('bias in standard errors', b);
  const z = 1.959963984540054;
  return normalCdf(-z - b) + normalCdf(-z + b);
}
