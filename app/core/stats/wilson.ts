import { requireCount } from './validate.ts';

export interface ProportionInterval {
  readonly low: number;
  readonly high: number;
}

/**
 * Wilson score interval for a binomial proportion (Wilson 1927, JASA 22:209; Newcombe 1998, Stat Med 17:857,
 * method 3): it stays inside [0, 1], unlike the normal (Wald) interval. `z` is the normal quantile (1.96 for 95%).
 */
export function wilsonInterval(successes: number, n: number, z = 1.959963984540054): ProportionInterval {
  requireCount('n', n);
  requireCount('successes', successes);
  if (successes > n) throw new RangeError(`successes (${successes}) exceed n (${n})`);
  if (n === 0) return { low: 0, high: 1 };
  const p = successes / n;
  const z2 = z * z;
  const centre = (p + z2 / (2 * n)) / (1 + z2 / n);
  const half = (z / (1 + z2 / n)) * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n));
  return { low: successes === 0 ? 0 : Math.max(0, centre - half), high: successes === n ? 1 : Math.min(1, centre + half) };
}
