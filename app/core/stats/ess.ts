import { requireNonNegative } from './validate.ts';

/** Kish effective sample size (Σw)²/Σw² (Kish, Survey Sampling, 1965); 0 when every weight is 0. */
export function kishEss(sumW: number, sumW2: number): number {
  requireNonNegative('sum of weights', sumW);
  requireNonNegative('sum of squared weights', sumW2);
  if (sumW2 === 0) {
    if (sumW !== 0) throw new RangeError(`sum of squared weights is 0 but sum of weights is ${sumW}`);
    return 0;
  }
  return (sumW * sumW) / sumW2;
}

/** Kish effective sample size of a list of non-negative weights. */
export function kishEssOf(weights: readonly number[]): number {
  let sumW = 0;
  let sumW2 = 0;
  for (const w of weights) {
    requireNonNegative('weight', w);
    sumW += w;
    sumW2 += w * w;
  }
  return kishEss(sumW, sumW2);
}
