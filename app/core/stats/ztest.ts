import { twoSidedNormalP } from './distributions.ts';
import { requireCount } from './validate.ts';

export interface TwoProportionZ {
  /** (p̂1 - p̂2) / sqrt(p̄(1 - p̄)(1/n1 + 1/n2)); 0 when p̄ is 0 or 1 (no variation, no evidence). */
  readonly z: number;
  /** Two-sided normal p-value. */
  readonly pValue: number;
}

/** Pooled two-proportion z-test of H0: π1 = π2 (e.g. Agresti, Categorical Data Analysis; z² is Pearson's 2×2 chi-square). */
export function twoProportionZTest(successes1: number, n1: number, successes2: number, n2: number): TwoProportionZ {
  requireCount('successes in group 1', successes1);
  requireCount('rows in group 1', n1);
  requireCount('successes in group 2', successes2);
  requireCount('rows in group 2', n2);
  if (n1 === 0 || n2 === 0) throw new RangeError(`both groups need rows, got n1 = ${n1}, n2 = ${n2}`);
  if (successes1 > n1) throw new RangeError(`group 1 has ${successes1} successes in ${n1} rows`);
  if (successes2 > n2) throw new RangeError(`group 2 has ${successes2} successes in ${n2} rows`);
  const pooled = (successes1 + successes2) / (n1 + n2);
  const variance = pooled * (1 - pooled) * (1 / n1 + 1 / n2);
  if (variance === 0) return { z: 0, pValue: 1 };
  const z = (successes1 / n1 - successes2 / n2) / Math.sqrt(variance);
  return { z, pValue: twoSidedNormalP(z) };
}
