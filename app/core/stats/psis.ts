import { compensatedSum } from './sum.ts';

// Pareto-smoothed importance sampling, ported from R's loo 2.5.1 (R/psis.R, R/gpdfit.R; Vehtari, Simpson,
// Gelman, Yao & Gabry, JMLR 25(72), 2024) with r_eff = 1, i.e. independent draws such as logged decisions.
// Each step mirrors loo's code so that k-hat agrees with loo to rounding (test/reference/psis).

export interface GpdFitOptions {
  /** Weakly informative prior shrinking k towards 0.5 (loo's `wip`); default true. */
  readonly wip?: boolean;
  /** Grid points beyond floor(sqrt(n)) (loo's `min_grid_pts`); default 30. */
  readonly minGridPoints?: number;
  /** Sort x first; pass false only when x is already ascending (loo's `sort_x`); default true. */
  readonly sortX?: boolean;
}

export interface GpdFit {
  /** Shape k; Infinity when the fit breaks down (loo returns Inf for NaN). */
  readonly k: number;
  /** Scale σ, computed from k before the prior adjustment, as loo does. */
  readonly sigma: number;
}

export interface PsisResult {
  /** Pareto shape k-hat of the upper tail; Infinity when the tail is too short (< 5) or constant. */
  readonly khat: number;
  /** M = ceil(min(0.2·S, 3·sqrt(S))) largest weights that were smoothed. */
  readonly tailLength: number;
  /** Log weights, unnormalized, tail replaced by Pareto quantiles and truncated at the largest raw log weight. */
  readonly smoothedLogWeights: number[];
}

/** Shortest tail loo will fit (loo's enough_tail_samples). */
const MIN_TAIL_LENGTH = 5;

/** Comparator that also orders -Infinity (a zero weight) without producing NaN. */
function ascending(a: number, b: number): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

function mean(values: readonly number[]): number {
  return compensatedSum(values) / values.length;
}

/** log Σ exp(v), the way matrixStats::logSumExp does it: max + log1p(Σ_{others} exp(v - max)). */
function logSumExp(values: readonly number[]): number {
  let iMax = 0;
  for (let i = 1; i < values.length; i++) if ((values[i] as number) > (values[iMax] as number)) iMax = i;
  const max = values[iMax] as number;
  let s = 0;
  for (let i = 0; i < values.length; i++) if (i !== iMax) s += Math.exp((values[i] as number) - max);
  return max + Math.log1p(s);
}

/** Profile log-likelihood per observation of the generalized Pareto at θ (Zhang & Stephens 2009; loo's lx). */
function profileLogLik(theta: number, x: readonly number[]): number {
  const a = -theta;
  // mean(x.map(log1p(a·x))) with compensatedSum's steps inlined: the grid makes this the inner loop of the fit
  let sum = 0;
  let compensation = 0;
  for (let i = 0; i < x.length; i++) {
    const v = Math.log1p(a * (x[i] as number));
    const t = sum + v;
    compensation += Math.abs(sum) >= Math.abs(v) ? sum - t + v : v - t + sum;
    sum = t;
  }
  const k = (sum + compensation) / x.length;
  return Math.log(a / k) - k - 1;
}

/** Generalized Pareto fit of Zhang & Stephens (Technometrics 51, 2009) with the weakly informative prior of Vehtari et al. (2024), as loo's gpdfit. */
export function gpdFit(x: readonly number[], options: GpdFitOptions = {}): GpdFit {
  const wip = options.wip ?? true;
  const minGridPoints = options.minGridPoints ?? 30;
  if (x.length < 2) throw new RangeError(`gpdFit needs at least 2 exceedances, got ${x.length}`);
  if (!Number.isSafeInteger(minGridPoints) || minGridPoints < 1) {
    throw new RangeError(`minGridPoints must be a whole number >= 1, got ${minGridPoints}`);
  }
  for (const v of x) if (!Number.isFinite(v)) throw new RangeError(`gpdFit needs finite exceedances, got ${String(v)}`);
  const xs = (options.sortX ?? true) ? [...x].sort(ascending) : x;
  const n = xs.length;
  const prior = 3;
  const m = minGridPoints + Math.floor(Math.sqrt(n));
  const xStar = xs[Math.floor(n / 4 + 0.5) - 1] as number;
  const xMax = xs[n - 1] as number;
  const theta: number[] = [];
  for (let j = 1; j <= m; j++) theta.push(1 / xMax + (1 - Math.sqrt(m / (j - 0.5))) / prior / xStar);
  const logLik = theta.map((t) => n * profileLogLik(t, xs));
  const norm = logSumExp(logLik);
  const thetaHat = compensatedSum(theta.map((t, j) => t * Math.exp((logLik[j] as number) - norm)));
  let k = mean(xs.map((xi) => Math.log1p(-thetaHat * xi)));
  const sigma = -k / thetaHat;
  if (wip) {
    const a = 10;
    k = (k * n) / (n + a) + (a * 0.5) / (n + a);
  }
  if (Number.isNaN(k)) k = Infinity;
  return { k, sigma };
}

/** Generalized Pareto quantile function (loo's qgpd). */
function gpdQuantile(p: number, k: number, sigma: number): number {
  if (Number.isNaN(sigma) || sigma <= 0) return NaN;
  return (sigma * Math.expm1(-k * Math.log1p(-p))) / k;
}

/** PSIS tail length M = ceil(min(0.2·S, 3·sqrt(S/r_eff))) with r_eff = 1 (Vehtari et al. 2024; loo's n_pareto). */
export function psisTailLength(sampleSize: number): number {
  if (!Number.isSafeInteger(sampleSize) || sampleSize < 1) {
    throw new RangeError(`sample size must be a whole number >= 1, got ${sampleSize}`);
  }
  return Math.ceil(Math.min(0.2 * sampleSize, 3 * Math.sqrt(sampleSize)));
}

/** Sample-size dependent k-hat threshold min(1 - 1/log10(S), 0.7) (Vehtari et al. 2024). */
export function paretoKThreshold(sampleSize: number): number {
  if (!(sampleSize > 1) || !Number.isFinite(sampleSize)) {
    throw new RangeError(`sample size must be a number > 1, got ${sampleSize}`);
  }
  return Math.min(1 - 1 / Math.log10(sampleSize), 0.7);
}

function isConstant(ascending: readonly number[]): boolean {
  return Math.abs((ascending[ascending.length - 1] as number) - (ascending[0] as number)) < Number.EPSILON / 100;
}

/** The generalized Pareto fit of the tail's exceedances over the cutoff (the fit in loo's psis_smooth_tail). */
function fitTail(tailAscending: readonly number[], expCutoff: number): GpdFit {
  return gpdFit(
    tailAscending.map((v) => Math.exp(v) - expCutoff),
    { sortX: false },
  );
}

/** Fits the tail (ascending log weights shifted by the overall max) above the cutoff (loo's psis_smooth_tail). */
function smoothTail(tailAscending: readonly number[], cutoff: number): { tail: readonly number[]; k: number } {
  const len = tailAscending.length;
  const expCutoff = Math.exp(cutoff);
  const fit = fitTail(tailAscending, expCutoff);
  if (!Number.isFinite(fit.k)) return { tail: tailAscending, k: fit.k };
  const tail = tailAscending.map((_, i) => Math.log(gpdQuantile((i + 1 - 0.5) / len, fit.k, fit.sigma) + expCutoff));
  return { tail, k: fit.k };
}

function checkLogWeights(logWeights: readonly number[]): number {
  let max = -Infinity;
  for (const v of logWeights) {
    if (Number.isNaN(v) || v === Infinity) throw new RangeError(`log weights must be finite or -Infinity (zero weight), got ${String(v)}`);
    if (v > max) max = v;
  }
  if (max === -Infinity) throw new RangeError('all weights are zero: PSIS needs at least one positive weight');
  return max;
}

/** Pareto-smoothed importance sampling of one vector of log weights (Vehtari et al. 2024; loo's do_psis_i with r_eff = 1). */
export function psis(logWeights: readonly number[]): PsisResult {
  const S = logWeights.length;
  if (S === 0) throw new RangeError('PSIS needs at least one log weight');
  const max = checkLogWeights(logWeights);
  const lw = logWeights.map((v) => v - max);
  const tailLength = psisTailLength(S);
  let khat = Infinity;
  if (tailLength >= MIN_TAIL_LENGTH) {
    // Array.prototype.sort is stable, like R's default radix sort.int, so tied weights map back identically.
    const order = lw.map((_, i) => i).sort((a, b) => ascending(lw[a] as number, lw[b] as number));
    const tailIds = order.slice(S - tailLength);
    const tailValues = tailIds.map((i) => lw[i] as number);
    if (!isConstant(tailValues)) {
      const cutoff = lw[order[S - tailLength - 1] as number] as number;
      const smoothed = smoothTail(tailValues, cutoff);
      khat = smoothed.k;
      tailIds.forEach((id, j) => {
        lw[id] = smoothed.tail[j] as number;
      });
    }
  }
  const smoothedLogWeights = lw.map((v) => (v > 0 ? 0 : v) + max);
  return { khat, tailLength, smoothedLogWeights };
}

/**
 * PSIS k-hat from the largest log weights only, sorted descending: needs the M + 1 largest of S
 * (M = psisTailLength(S): the tail and the cutoff below it) and equals psis(all).khat exactly.
 */
export function psisKhatFromTail(largestLogWeightsDescending: readonly number[], sampleSize: number): number {
  const tailLength = psisTailLength(sampleSize);
  const top = largestLogWeightsDescending;
  if (top.length > sampleSize) {
    throw new RangeError(`got ${top.length} largest log weights for a sample of only ${sampleSize}`);
  }
  if (tailLength < MIN_TAIL_LENGTH) return Infinity;
  if (top.length < tailLength + 1) {
    throw new RangeError(`PSIS with S = ${sampleSize} needs the ${tailLength + 1} largest log weights, got ${top.length}`);
  }
  const used = top.slice(0, tailLength + 1);
  const max = checkLogWeights(used);
  for (let i = 1; i < used.length; i++) {
    if ((used[i] as number) > (used[i - 1] as number)) {
      throw new RangeError(`largest log weights must be sorted descending; position ${i} (${used[i]}) exceeds position ${i - 1} (${used[i - 1]})`);
    }
  }
  const shifted = used.map((v) => v - max);
  const tailAscending = shifted.slice(0, tailLength).reverse();
  if (isConstant(tailAscending)) return Infinity;
  return fitTail(tailAscending, Math.exp(shifted[tailLength] as number)).k;
}
