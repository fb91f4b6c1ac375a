import { binomialTwoSidedP } from './binomial.ts';
import { normalQuantile, twoSidedNormalP } from './distributions.ts';
import { requireCount, requireNonNegative } from './validate.ts';

export interface WeightBalance {
  /** B = (1/n) Σ_i 1[a_i = a]/p_i over all n rows of the group; E[B] = 1 when propensities are right. */
  readonly balance: number;
  /** Standard error of B: sample standard deviation of X_i = 1[a_i = a]/p_i (divisor n - 1) over sqrt(n). */
  readonly se: number;
  /** (B - 1)/SE; ±Infinity when SE = 0 and B ≠ 1 (every row gives the same X_i ≠ 1), 0 when B = 1 and SE = 0. */
  readonly z: number;
  readonly pValue: number;
}

/**
 * Weight-balance test of E[1{A=a}/p(A|x)] = 1 (the identity behind IPS, Horvitz & Thompson 1952): the mean of
 * X_i = 1[a_i = a]/p_i with the standard error of a sample mean (common practice). Inputs: n rows in the
 * group, and Σ 1/p, Σ 1/p² over the rows whose logged action is a.
 */
export function weightBalance(n: number, sumInvP: number, sumInvP2: number): WeightBalance {
  requireCount('rows in group', n);
  requireNonNegative('sum of 1/p', sumInvP);
  requireNonNegative('sum of 1/p²', sumInvP2);
  if (n < 2) throw new RangeError(`weight balance needs at least 2 rows in the group, got ${n}`);
  const balance = sumInvP / n;
  // Σ (X_i - B)² = Σ X_i² - n B², since the rows with another action contribute X_i = 0.
  const sumSqDev = Math.max(0, sumInvP2 - n * balance * balance);
  const se = Math.sqrt(sumSqDev / (n - 1) / n);
  if (se === 0) {
    if (balance === 1) return { balance, se, z: 0, pValue: 1 };
    return { balance, se, z: balance > 1 ? Infinity : -Infinity, pValue: 0 };
  }
  const z = (balance - 1) / se;
  return { balance, se, z, pValue: twoSidedNormalP(z) };
}

/**
 * An action never logged in n rows: if its propensity were at least `floor` on every row, the chance of
 * seeing it in none is at most (1 − floor)^n, the binomial probability of zero successes (common
 * practice). That bound serves as the p-value of the weight-balance test; z is undefined (NaN).
 */
export function neverLoggedBalance(n: number, floor: number): WeightBalance {
  requireCount('rows in group', n);
  if (!(floor > 0 && floor < 1)) throw new RangeError(`floor must lie in (0, 1), got ${floor}`);
  return { balance: 0, se: 0, z: Number.NaN, pValue: Math.pow(1 - floor, n) };
}

export interface CountBalance extends WeightBalance {
  /** expected count of the action under the logged propensities, n · p̄ with p̄ = c / Σ_{A=a} 1/p */
  readonly expected: number;
  readonly method: 'exact binomial' | 'normal';
}

/**
 * Weight balance for an action logged c ≥ 1 times among n rows, valid at every count: B = S1/n with
 * S1 = Σ_{A=a} 1/p; the count c is compared with Binomial(n, p̄), p̄ = c/S1 (exact when p is constant in
 * the group, and conservative when it varies, since a Poisson-binomial count has a smaller variance than
 * the binomial of the same mean; Hoeffding 1956). The exact two-sided test is used where the expected
 * count n·p̄ (or of the other actions, n − n·p̄) is below `minExpected`, the normal test of B (weightBalance) otherwise. z is the
 * normal-equivalent deviate of the p-value, signed like B − 1, so both methods read on one scale.
 */
export function countBalance(n: number, count: number, sumInvP: number, sumInvP2: number, minExpected: number): CountBalance {
  requireCount('rows in group', n);
  requireCount('rows of the action', count);
  if (count < 1 || count > n) throw new RangeError(`the action must be logged between 1 and ${n} times, got ${count}`);
  if (!(sumInvP >= count)) throw new RangeError(`sum of 1/p (${sumInvP}) must be at least the count (${count}), since p ≤ 1`);
  const balance = sumInvP / n;
  const pBar = count / sumInvP;
  const expected = n * pBar;
  // the normal test needs many expected events and many expected non-events (np, n(1 − p) ≥ minExpected)
  if (expected >= minExpected && n - expected >= minExpected && n >= 2) {
    const w = weightBalance(n, sumInvP, sumInvP2);
    return { ...w, expected, method: 'normal' };
  }
  const pValue = binomialTwoSidedP(count, n, pBar);
  const z = balance === 1 ? 0 : Math.sign(balance - 1) * normalQuantile(1 - Math.max(pValue, 1e-300) / 2);
  // the standard error of B implied by the binomial: sqrt(n p̄ (1 − p̄)) / (n p̄)
  const se = Math.sqrt((1 - pBar) / expected);
  return { balance, se, z, pValue, expected, method: 'exact binomial' };
}
