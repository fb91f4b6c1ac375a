import normalCdfStdlib from '@stdlib/stats-base-dists-normal-cdf';
import fCdfStdlib from '@stdlib/stats-base-dists-f-cdf';
import gammainc from '@stdlib/math-base-special-gammainc';

// Upper tails are computed directly, never as 1 - cdf: 1 - cdf rounds every p below ~1.1e-16 to 0, and
// Benjamini-Hochberg ranks p-values, so tiny ones must stay distinct. Remaining limit: p-values below
// ~1e-308 underflow to 0 (subnormals to ~5e-324 are kept).

/** Standard normal CDF Φ(x) (stdlib, via erfc). */
export function normalCdf(x: number): number {
  return normalCdfStdlib(x, 0, 1);
}

/** Standard normal upper tail 1 - Φ(x) = Φ(-x) by symmetry, accurate far into the tail. */
export function normalSf(x: number): number {
  return normalCdfStdlib(-x, 0, 1);
}

// Wichura's AS 241 (PPND16) coefficients, digit for digit as published (Applied Statistics 37, 1988, 477-484),
// so they can be checked against the paper; each literal rounds to the nearest double.
/* eslint-disable no-loss-of-precision */
const AS241_A = [3.387132872796366608, 133.14166789178437745, 1971.5909503065514427, 13731.693765509461125,
  45921.953931549871457, 67265.770927008700853, 33430.575583588128105, 2509.0809287301226727];
const AS241_B = [1, 42.313330701600911252, 687.1870074920579083, 5394.1960214247511077, 21213.794301586595867,
  39307.89580009271061, 28729.085735721942674, 5226.495278852854561];
const AS241_C = [1.42343711074968357734, 4.6303378461565452959, 5.7694972214606914055, 3.64784832476320460504,
  1.27045825245236838258, 0.24178072517745061177, 0.0227238449892691845833, 7.7454501427834140764e-4];
const AS241_D = [1, 2.05319162663775882187, 1.6763848301838038494, 0.68976733498510000455, 0.14810397642748007459,
  0.0151986665636164571966, 5.475938084995344946e-4, 1.05075007164441684324e-9];
const AS241_E = [6.6579046435011037772, 5.4637849111641143699, 1.7848265399172913358, 0.29656057182850489123,
  0.026532189526576123093, 0.0012426609473880784386, 2.71155556874348757815e-5, 2.01033439929228813265e-7];
const AS241_F = [1, 0.59983220655588793769, 0.13692988092273580531, 0.0148753612908506148525,
  7.868691311456132591e-4, 1.8463183175100546818e-5, 1.4215117583164458887e-7, 2.04426310338993978564e-15];
/* eslint-enable no-loss-of-precision */

function polynomial(coefficients: readonly number[], x: number): number {
  let y = 0;
  for (let i = coefficients.length - 1; i >= 0; i--) y = y * x + (coefficients[i] as number);
  return y;
}

/**
 * Standard normal quantile Φ⁻¹(p), Wichura's AS 241 (Applied Statistics 37, 1988), accurate to about 1e-16
 * relative in both tails; stdlib's erfinv(2p - 1) form loses the digits of small p. ±Infinity at 0 and 1, NaN outside.
 */
export function normalQuantile(p: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  const q = p - 0.5;
  if (Math.abs(q) <= 0.425) {
    const r = 0.180625 - q * q;
    return (q * polynomial(AS241_A, r)) / polynomial(AS241_B, r);
  }
  let r = Math.sqrt(-Math.log(q < 0 ? p : 1 - p));
  let x: number;
  if (r <= 5) {
    r -= 1.6;
    x = polynomial(AS241_C, r) / polynomial(AS241_D, r);
  } else {
    r -= 5;
    x = polynomial(AS241_E, r) / polynomial(AS241_F, r);
  }
  return q < 0 ? -x : x;
}

/** Two-sided normal p-value 2·(1 - Φ(|z|)), capped at 1. */
export function twoSidedNormalP(z: number): number {
  return Math.min(1, 2 * normalSf(Math.abs(z)));
}

/** Chi-square upper tail P(X > x), X ~ χ²(df): the regularized upper incomplete gamma Q(df/2, x/2). */
export function chiSquareSf(x: number, df: number): number {
  if (Number.isNaN(x) || !(df > 0)) return NaN;
  if (x <= 0) return 1;
  if (x === Infinity) return 0;
  return gammainc(x / 2, df / 2, true, true);
}

/** F upper tail P(X > x), X ~ F(d1, d2), as the lower tail of 1/X ~ F(d2, d1) (stdlib f-cdf). */
export function fSf(x: number, d1: number, d2: number): number {
  if (Number.isNaN(x) || !(d1 > 0) || !(d2 > 0)) return NaN;
  if (x <= 0) return 1;
  if (x === Infinity) return 0;
  return fCdfStdlib(1 / x, d2, d1);
}
