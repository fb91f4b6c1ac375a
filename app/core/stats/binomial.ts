import { requireCount, requireProbability } from './validate.ts';

/** Relative tolerance for "as likely as the observed count", as scipy.stats.binomtest uses (1 + 1e-7). */
const TIE = Math.log1p(1e-7);

/**
 * Exact two-sided binomial test of k successes in n trials with success probability p: the sum of the
 * probabilities of all counts no more likely than k (the minimum-likelihood method; Clopper & Pearson
 * 1934 family, as scipy.stats.binomtest 'two-sided'). Valid at every count, unlike a normal approximation.
 */
export function binomialTwoSidedP(k: number, n: number, p: number): number {
  requireCount('trials', n);
  requireCount('successes', k);
  requireProbability('success probability', p);
  if (k > n) throw new RangeError(`successes (${k}) exceed trials (${n})`);
  if (p === 0) return k === 0 ? 1 : 0;
  if (p === 1) return k === n ? 1 : 0;
  const mean = n * p;
  if (k === mean) return 1;
  // log pmf by the ratio pmf(i + 1) / pmf(i) = (n − i)/(i + 1) · p/(1 − p), from pmf(0) = (1 − p)^n
  const logOdds = Math.log(p) - Math.log1p(-p);
  let lp = n * Math.log1p(-p);
  const logPmf: number[] = [];
  const lastNeeded = Math.max(k, Math.ceil(mean));
  let i = 0;
  for (; i <= n && i <= lastNeeded; i++) {
    logPmf.push(lp);
    lp += Math.log((n - i) / (i + 1)) + logOdds;
  }
  const threshold = (logPmf[k] as number) + TIE;
  let sum = 0;
  for (const l of logPmf) if (l <= threshold) sum += Math.exp(l);
  // beyond the mode and k the pmf falls geometrically: stop once the terms are negligible beside pmf(k)
  for (; i <= n; i++) {
    if (lp <= threshold) sum += Math.exp(lp);
    if (lp < threshold - 60) break;
    lp += Math.log((n - i) / (i + 1)) + logOdds;
  }
  return Math.min(1, sum);
}
