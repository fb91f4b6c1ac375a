import { normalCdf, normalQuantile } from './distributions.ts';
import { requirePositive, requireProbability } from './validate.ts';

/**
 * Sample sizes and power of normal (z) tests, two-sided at level α. `strict: false` (the default) counts
 * only the rejection tail on the side of the true difference, as R's power.prop.test does by default;
 * `strict: true` adds the other tail.
 */
export interface PowerOptions {
  readonly alpha: number;
  readonly power: number;
  readonly strict?: boolean;
}

function checkLevels(alpha: number, power: number): void {
  requireProbability('alpha', alpha);
  requireProbability('power', power);
  if (alpha <= 0 || alpha >= 1) throw new RangeError(`alpha must lie strictly between 0 and 1, got ${alpha}`);
  if (power <= 0 || power >= 1) throw new RangeError(`power must lie strictly between 0 and 1, got ${power}`);
}

/** z₁₋α/₂ + z_power: the detectable difference in units of the estimate's standard error (normal power formula). */
export function detectableMultiplier(alpha: number, power: number): number {
  checkLevels(alpha, power);
  return normalQuantile(1 - alpha / 2) + normalQuantile(power);
}

/**
 * Power of a two-sided z test of a mean shifted by δ, from n rows of standard deviation σ:
 * Φ(√n·δ/σ − z₁₋α/₂) (+ Φ(−√n·δ/σ − z₁₋α/₂) when strict). Source: Chow, Shao & Wang (2008),
 * Sample Size Calculations in Clinical Research, 2nd ed., §3.1 (one-sample mean, large-sample z test).
 */
export function normalPower(n: number, delta: number, sd: number, alpha: number, strict = false): number {
  requirePositive('n', n);
  requirePositive('delta', delta);
  requirePositive('sd', sd);
  checkLevels(alpha, 0.5);
  const z = normalQuantile(1 - alpha / 2);
  const shift = (Math.sqrt(n) * delta) / sd;
  return normalCdf(shift - z) + (strict ? normalCdf(-shift - z) : 0);
}

/**
 * Rows a two-sided z test of a mean needs to detect a difference δ with the given power, n = ((z₁₋α/₂ + z_power)·σ/δ)²
 * (not rounded up); with `strict` the root of the strict power equation (bisection to full precision).
 * Source: Chow, Shao & Wang (2008), §3.1.
 */
export function normalSampleSize(delta: number, sd: number, options: PowerOptions): number {
  requirePositive('delta', delta);
  requirePositive('sd', sd);
  checkLevels(options.alpha, options.power);
  const m = detectableMultiplier(options.alpha, options.power);
  const n = (m * sd / delta) ** 2;
  if (!options.strict) return n;
  // the strict power exceeds the one-tail power, so the root lies below n; bisect on [n/4, n]
  let lo = n / 4;
  let hi = n;
  for (let i = 0; i < 200 && hi - lo > 1e-13 * hi; i++) {
    const mid = (lo + hi) / 2;
    if (normalPower(mid, delta, sd, options.alpha, true) < options.power) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * Rows per group for a two-sided test of two proportions p₁ ≠ p₂ (pooled-variance normal test, one tail as in
 * R's power.prop.test with strict = FALSE): n = (z₁₋α/₂·√(2p̄q̄) + z_power·√(p₁q₁ + p₂q₂))² / (p₁ − p₂)².
 * Source: Fleiss, Levin & Paik (2003), Statistical Methods for Rates and Proportions, 3rd ed., eq. (4.14) without continuity correction.
 */
export function twoProportionSampleSize(p1: number, p2: number, options: PowerOptions): number {
  requireProbability('p1', p1);
  requireProbability('p2', p2);
  if (p1 === p2) throw new RangeError(`p1 and p2 must differ, both are ${p1}`);
  checkLevels(options.alpha, options.power);
  const za = normalQuantile(1 - options.alpha / 2);
  const zb = normalQuantile(options.power);
  const bar = (p1 + p2) / 2;
  const root = za * Math.sqrt(2 * bar * (1 - bar)) + zb * Math.sqrt(p1 * (1 - p1) + p2 * (1 - p2));
  return (root / (p1 - p2)) ** 2;
}

/** Power of the same two-proportion test with n rows per group (Fleiss, Levin & Paik 2003, eq. 4.14 solved for power). */
export function twoProportionPower(n: number, p1: number, p2: number, alpha: number): number {
  requirePositive('n', n);
  requireProbability('p1', p1);
  requireProbability('p2', p2);
  checkLevels(alpha, 0.5);
  const za = normalQuantile(1 - alpha / 2);
  const bar = (p1 + p2) / 2;
  return normalCdf((Math.sqrt(n) * Math.abs(p1 - p2) - za * Math.sqrt(2 * bar * (1 - bar))) / Math.sqrt(p1 * (1 - p1) + p2 * (1 - p2)));
}
