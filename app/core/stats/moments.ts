import { requireCount, requireFinite } from './validate.ts';

/** Count, sum and sum of squares of one group of values: the form the cube keeps (DEVELOPERS.md, "The scans of one audit"). */
export interface GroupMoments {
  readonly n: number;
  readonly sum: number;
  readonly sumSq: number;
}

export function checkMoments(name: string, g: GroupMoments): void {
  requireCount(`${name} n`, g.n);
  requireFinite(`${name} sum`, g.sum);
  requireFinite(`${name} sumSq`, g.sumSq);
  if (g.sumSq < 0) throw new RangeError(`${name} sumSq must be >= 0, got ${g.sumSq}`);
  if (g.n === 0 && (g.sum !== 0 || g.sumSq !== 0)) throw new RangeError(`${name} has n = 0 but non-zero sums`);
}

/**
 * Σ (x - mean)² of a group from its raw sums: sumSq - sum·mean, floored at 0. Exact sums lose about
 * log10(mean²/variance) digits here; rewards on a 0..1 or similar scale lose few.
 */
export function centeredSumOfSquares(g: GroupMoments): number {
  if (g.n === 0) return 0;
  return Math.max(0, g.sumSq - g.sum * (g.sum / g.n));
}
