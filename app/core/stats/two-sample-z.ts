import { twoSidedNormalP } from './distributions.ts';

export interface TwoSampleZ {
  /** (b − a) / √(se_a² + se_b²). */
  readonly z: number;
  /** √(se_a² + se_b²): the standard error of the difference. */
  readonly se: number;
  /** Two-sided normal p-value. */
  readonly pValue: number;
}

/**
 * Difference of two independent estimates with standard errors: the large-sample two-sample z (Welch 1947,
 * Biometrika 34:28, whose statistic this is; normal reference distribution). Null when either input is missing
 * or the combined standard error is 0 or not finite.
 */
export function twoSampleZ(a: number | null, seA: number | null, b: number | null, seB: number | null): TwoSampleZ | null {
  if (a === null || b === null || seA === null || seB === null) return null;
  if (![a, b, seA, seB].every(Number.isFinite) || seA < 0 || seB < 0) return null;
  const se = Math.sqrt(seA * seA + seB * seB);
  if (!(se > 0)) return null;
  const z = (b - a) / se;
  return { z, se, pValue: twoSidedNormalP(z) };
}
