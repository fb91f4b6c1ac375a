import { requireNonNegative, requirePositive } from './validate.ts';

/** Proportion floor for empty bins; 1e-4 is common practice, and keeps ln(a/e) finite. */
export const PSI_DEFAULT_FLOOR = 1e-4;

/**
 * Population stability index Σ (a_i - e_i)·ln(a_i/e_i) over bins, a and e the bin proportions of the
 * actual and expected counts, each floored at `floor` without renormalizing (Yurdakul 2018; common practice).
 */
export function populationStabilityIndex(
  expectedCounts: readonly number[],
  actualCounts: readonly number[],
  floor: number = PSI_DEFAULT_FLOOR,
): number {
  if (expectedCounts.length !== actualCounts.length) {
    throw new RangeError(`PSI needs the same bins on both sides, got ${expectedCounts.length} and ${actualCounts.length}`);
  }
  if (expectedCounts.length === 0) throw new RangeError('PSI needs at least one bin');
  if (!(floor > 0 && floor < 1)) throw new RangeError(`PSI floor must be in (0, 1), got ${String(floor)}`);
  expectedCounts.forEach((c, i) => requireNonNegative(`expected count ${i}`, c));
  actualCounts.forEach((c, i) => requireNonNegative(`actual count ${i}`, c));
  const eTotal = expectedCounts.reduce((s, c) => s + c, 0);
  const aTotal = actualCounts.reduce((s, c) => s + c, 0);
  requirePositive('expected total count', eTotal);
  requirePositive('actual total count', aTotal);
  let psi = 0;
  expectedCounts.forEach((ec, i) => {
    const e = Math.max(ec / eTotal, floor);
    const a = Math.max((actualCounts[i] as number) / aTotal, floor);
    psi += (a - e) * Math.log(a / e);
  });
  return psi;
}
