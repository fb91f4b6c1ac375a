import { centeredSumOfSquares, checkMoments, type GroupMoments } from './moments.ts';

export interface ChangePoint {
  /** Index of the first group after the change: groups [0, index) are before, [index, end) after. */
  readonly index: number;
  readonly meanBefore: number;
  readonly meanAfter: number;
  /** (meanAfter - meanBefore)/|meanBefore|; ±Infinity when meanBefore is 0 and the means differ, 0 when both are 0. */
  readonly relativeChange: number;
  /** n1·n2/(n1 + n2)·(meanBefore - meanAfter)², the between-segment sum of squares the split maximizes. */
  readonly betweenSs: number;
  /** Σ (x - overall mean)² of all values, so betweenSs / totalSs is the share of variation the split explains. */
  readonly totalSs: number;
}

/**
 * Best single change point in the mean of an ordered sequence of groups: the split maximizing the
 * between-segment sum of squares, i.e. the least-squares change point (Hinkley, Biometrika 57, 1970), the
 * first step of binary segmentation (Scott & Knott 1974). Empty groups are allowed; both sides need rows.
 * Returns null when fewer than two groups have rows. Ties go to the earliest split.
 */
export function bestChangePoint(groups: readonly GroupMoments[]): ChangePoint | null {
  groups.forEach((g, i) => checkMoments(`group ${i}`, g));
  const n = groups.reduce((s, g) => s + g.n, 0);
  const sum = groups.reduce((s, g) => s + g.sum, 0);
  if (groups.filter((g) => g.n > 0).length < 2) return null;
  const mean = sum / n;
  // Total SS as within-group SS plus between-group SS about the overall mean, both well conditioned.
  const totalSs =
    groups.reduce((s, g) => s + centeredSumOfSquares(g), 0) +
    groups.reduce((s, g) => (g.n > 0 ? s + g.n * (g.sum / g.n - mean) ** 2 : s), 0);
  let best: ChangePoint | null = null;
  let n1 = 0;
  let s1 = 0;
  for (let index = 1; index < groups.length; index++) {
    const g = groups[index - 1] as GroupMoments;
    n1 += g.n;
    s1 += g.sum;
    const n2 = n - n1;
    if (n1 === 0 || n2 === 0) continue;
    const meanBefore = s1 / n1;
    const meanAfter = (sum - s1) / n2;
    const betweenSs = ((n1 * n2) / n) * (meanBefore - meanAfter) ** 2;
    if (best === null || betweenSs > best.betweenSs) {
      const relativeChange =
        meanBefore !== 0 ? (meanAfter - meanBefore) / Math.abs(meanBefore) : meanAfter === 0 ? 0 : Math.sign(meanAfter) * Infinity;
      best = { index, meanBefore, meanAfter, relativeChange, betweenSs, totalSs };
    }
  }
  return best;
}
