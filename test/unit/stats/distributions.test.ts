import { describe, expect, it } from 'vitest';
import { chiSquareSf, fSf, normalCdf, normalQuantile, normalSf, twoSidedNormalP } from '../../../app/core/stats/distributions.ts';
import { expectRelClose, loadFixture } from './fixtures.ts';

// scipy.stats norm/chi2/f on this machine (test/reference/stats/make-fixtures.py).
const ref = loadFixture<{
  normalCdf: [number, number][];
  normalSf: [number, number][];
  normalQuantile: [number, number][];
  chiSquareSf: [number, number, number][];
  fSf: [number, number, number, number][];
}>('stats/distributions.json');

describe('distributions against scipy.stats', () => {
  // 1e-12 for the normal tails: scipy and R's pnorm differ from each other by 1e-13 relative near 1e-300.
  it.each(ref.normalCdf)('normalCdf(%f) = %g', (x, p) => expectRelClose(normalCdf(x), p, 1e-12));
  it.each(ref.normalSf)('normalSf(%f) = %g', (x, p) => expectRelClose(normalSf(x), p, 1e-12));
  it.each(ref.normalQuantile)('normalQuantile(%g) = %f', (p, x) => expectRelClose(normalQuantile(p), x, 1e-12));
  it.each(ref.chiSquareSf)('chiSquareSf(%f, %i) = %g', (x, df, p) => expectRelClose(chiSquareSf(x, df), p, 1e-11));
  it.each(ref.fSf)('fSf(%f, %f, %f) = %g', (x, d1, d2, p) => expectRelClose(fSf(x, d1, d2), p, 1e-11));
});

describe('distribution edge cases', () => {
  it('keeps upper tails far below 1e-16, where 1 - cdf would give 0', () => {
    // scipy: chi2.sf(300, 2) = exp(-150) = 7.175e-66 (closed form for df = 2).
    expectRelClose(chiSquareSf(300, 2), Math.exp(-150), 1e-12);
    expect(fSf(400, 3, 90)).toBeGreaterThan(0);
    expect(fSf(400, 3, 90)).toBeLessThan(1e-50);
  });
  it('normalQuantile inverts normalCdf deep in the lower tail, where erfinv(2p - 1) cannot', () => {
    for (const p of [1e-300, 1e-100, 1e-30, 1e-17, 1e-10]) expectRelClose(normalCdf(normalQuantile(p)), p, 1e-12);
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(normalQuantile(1.5)).toBeNaN();
  });
  it('gives 1 at and below 0 and 0 at infinity', () => {
    expect(chiSquareSf(0, 3)).toBe(1);
    expect(chiSquareSf(Infinity, 3)).toBe(0);
    expect(fSf(0, 2, 5)).toBe(1);
    expect(fSf(Infinity, 2, 5)).toBe(0);
  });
  it('returns NaN for invalid degrees of freedom', () => {
    expect(chiSquareSf(1, 0)).toBeNaN();
    expect(fSf(1, -1, 3)).toBeNaN();
    expect(chiSquareSf(NaN, 2)).toBeNaN();
  });
  it('two-sided normal p: 1.959963984540054 gives 0.05 (the familiar 95% point), capped at 1', () => {
    expectRelClose(twoSidedNormalP(1.959963984540054), 0.05, 1e-12);
    expectRelClose(twoSidedNormalP(-1.959963984540054), 0.05, 1e-12);
    expect(twoSidedNormalP(0)).toBe(1);
  });
});
