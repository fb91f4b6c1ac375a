/** The balance check's effect size: the bias bound and the miss rate of a biased interval. */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { balanceBiasBound, missRateWithBias, rewardScale } from '../../../app/core/stats/balance-bias.ts';

/** scipy: norm.cdf(−z − b) + norm.cdf(−z + b), z = norm.ppf(0.975) (test/reference/stats/make-bias.py → bias.json). */
const REF = JSON.parse(readFileSync(new URL('../../reference/stats/bias.json', import.meta.url), 'utf8')) as { miss_rate: [number, number][] };

describe('missRateWithBias', () => {
  it.each(REF.miss_rate)('a bias of %s SE: scipy gives %s', (b, expected) => {
    expect(missRateWithBias(b)).toBeCloseTo(expected, 12);
  });

  it.each([
    // Cochran (1977), Sampling Techniques, §1.8, table of the probability of an error beyond 1.96σ (from memory of the table)
    [0.1, 0.0511], [0.2, 0.0546], [1.0, 0.17],
  ])('matches Cochran\'s table at a bias of %s SE: %s', (b, expected) => {
    expect(missRateWithBias(b)).toBeCloseTo(expected, 3);
  });
});

describe('balanceBiasBound', () => {
  it.each([
    // by hand: |B − 1| · mass · R
    { balance: 2.19, mass: 0.0314, scale: 1, bound: 1.19 * 0.0314 },
    { balance: 0.5, mass: 0.1, scale: 4, bound: 0.2 },
    { balance: 1, mass: 0.5, scale: 10, bound: 0 },
  ])('|$balance − 1| · $mass · $scale = $bound', ({ balance, mass, scale, bound }) => {
    expect(balanceBiasBound(balance, mass, scale)).toBeCloseTo(bound, 14);
  });

  it('refuses a negative or non-finite argument by name', () => {
    expect(() => balanceBiasBound(1, -0.1, 1)).toThrow(/target mass/);
    expect(() => balanceBiasBound(Number.NaN, 0.1, 1)).toThrow(/balance/);
  });
});

describe('rewardScale', () => {
  it.each([
    { min: 0, max: 1, scale: 1 },
    { min: -1, max: 1, scale: 2 },
    { min: 1e5, max: 1e5 + 1, scale: 1e5 + 1 },
    { min: -3, max: -2, scale: 3 },
    { min: 0, max: 0, scale: null },
    { min: null, max: 1, scale: null },
  ])('range [$min, $max] → $scale', ({ min, max, scale }) => {
    expect(rewardScale(min, max)).toBe(scale);
  });
});
