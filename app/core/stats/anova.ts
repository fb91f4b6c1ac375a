import { fSf } from './distributions.ts';
import { centeredSumOfSquares, checkMoments, type GroupMoments } from './moments.ts';

export interface AnovaResult {
  readonly F: number;
  /** Groups with n > 0, minus 1. */
  readonly df1: number;
  /** Rows minus groups with n > 0. */
  readonly df2: number;
  /** Upper tail of F(df1, df2). F = Infinity, p = 0 when groups differ but have no spread inside; F = 0, p = 1 when no value varies. */
  readonly pValue: number;
}

/**
 * One-way ANOVA F = [SS_between/(k-1)] / [SS_within/(N-k)] from group counts and sums (Fisher 1925; e.g. Montgomery, Design and Analysis of Experiments).
 * F is invariant to a common shift c of all values: sums of x - c with c near the mean avoid the cancellation in sumSq - sum²/n.
 */
export function oneWayAnova(groups: readonly GroupMoments[]): AnovaResult {
  groups.forEach((g, i) => checkMoments(`group ${i}`, g));
  const used = groups.filter((g) => g.n > 0);
  const k = used.length;
  const total = used.reduce((s, g) => s + g.n, 0);
  const df1 = k - 1;
  const df2 = total - k;
  if (k < 2) throw new RangeError(`one-way ANOVA needs at least 2 non-empty groups, got ${k}`);
  if (df2 < 1) throw new RangeError(`one-way ANOVA needs more rows than groups, got ${total} rows in ${k} groups`);
  // Between-group SS from centred group means, which stays accurate when the overall mean is large.
  const means = used.map((g) => g.sum / g.n);
  const grandMean = used.reduce((s, g, i) => s + g.n * (means[i] as number), 0) / total;
  const ssBetween = used.reduce((s, g, i) => s + g.n * ((means[i] as number) - grandMean) ** 2, 0);
  const ssWithin = used.reduce((s, g) => s + centeredSumOfSquares(g), 0);
  if (ssWithin === 0) {
    return ssBetween === 0 ? { F: 0, df1, df2, pValue: 1 } : { F: Infinity, df1, df2, pValue: 0 };
  }
  const F = ssBetween / df1 / (ssWithin / df2);
  return { F, df1, df2, pValue: fSf(F, df1, df2) };
}
