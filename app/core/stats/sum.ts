/** Neumaier's compensated summation (Neumaier 1974), so long sums of mixed magnitudes keep full precision. */
export function compensatedSum(values: readonly number[]): number {
  let sum = 0;
  let compensation = 0;
  for (const v of values) {
    const t = sum + v;
    compensation += Math.abs(sum) >= Math.abs(v) ? sum - t + v : v - t + sum;
    sum = t;
  }
  return sum + compensation;
}
