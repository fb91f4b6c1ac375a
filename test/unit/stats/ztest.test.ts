import { describe, expect, it } from 'vitest';
import { twoProportionZTest } from '../../../app/core/stats/ztest.ts';
import { expectRelClose, loadFixture } from './fixtures.ts';

// statsmodels is not installed here; the reference is R's stats::prop.test(correct = FALSE), whose X-squared is z²
// and whose p-value is the two-sided normal p (test/reference/stats/make-ztest.R).
const ref = loadFixture<{ cases: { x1: number; n1: number; x2: number; n2: number; chiSquare: number; pValue: number }[] }>(
  'stats/ztest.json',
);

describe('twoProportionZTest', () => {
  it('hand computation: 45/100 vs 30/100', () => {
    // p̄ = 75/200 = 0.375; SE = sqrt(0.375·0.625·(1/100 + 1/100)) = sqrt(0.0046875); z = 0.15/SE = 2.1908902300206643.
    const r = twoProportionZTest(45, 100, 30, 100);
    expectRelClose(r.z, 0.15 / Math.sqrt(0.375 * 0.625 * 0.02), 1e-14);
    expect(r.z).toBeCloseTo(2.19089023, 8);
  });

  it.each(ref.cases.map((c) => [`${c.x1}/${c.n1} vs ${c.x2}/${c.n2}`, c] as const))('matches R prop.test: %s', (_name, c) => {
    const r = twoProportionZTest(c.x1, c.n1, c.x2, c.n2);
    expectRelClose(r.z ** 2, c.chiSquare, 1e-12);
    expect(Math.sign(r.z)).toBe(Math.sign(c.x1 / c.n1 - c.x2 / c.n2));
    expectRelClose(r.pValue, c.pValue, 1e-10);
  });

  it('is antisymmetric in the groups', () => {
    const a = twoProportionZTest(8, 50, 20, 60);
    const b = twoProportionZTest(20, 60, 8, 50);
    expect(a.z).toBeCloseTo(-b.z, 14);
    expect(a.pValue).toBeCloseTo(b.pValue, 14);
  });

  it('gives z 0, p 1 when both groups are all successes or all failures', () => {
    expect(twoProportionZTest(0, 10, 0, 20)).toEqual({ z: 0, pValue: 1 });
    expect(twoProportionZTest(10, 10, 20, 20)).toEqual({ z: 0, pValue: 1 });
  });

  it.each([
    [11, 10, 1, 10, /11 successes in 10 rows/],
    [1, 0, 1, 10, /both groups need rows/],
    [1.5, 10, 1, 10, /successes in group 1/],
    [1, 10, -1, 10, /successes in group 2/],
  ])('rejects (%f, %f, %f, %f)', (x1, n1, x2, n2, message) => {
    expect(() => twoProportionZTest(x1, n1, x2, n2)).toThrow(message);
  });
});
