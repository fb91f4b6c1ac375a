import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { cmhGeneralAssociation, type BinaryStratum } from '../../../app/core/stats/cmh.ts';

// Reference values: R 4.2.2 stats::mantelhaen.test on 2 x W x K tables, written by
// test/reference/stats/make-cmh.R (seeded; generalized CMH of Landis, Heyman & Koch 1978).
const fixture = JSON.parse(readFileSync(new URL('../../reference/stats/cmh.json', import.meta.url), 'utf8')) as {
  cases: { strata: BinaryStratum[]; statistic: number; df: number; p: number }[];
};

describe('cmhGeneralAssociation', () => {
  it.each(fixture.cases.map((c, i) => [i, c] as const))('matches R mantelhaen.test, case %i', (_i, c) => {
    const r = cmhGeneralAssociation(c.strata);
    expect(r.df).toBe(c.df);
    expect(Math.abs(r.statistic - c.statistic) / c.statistic).toBeLessThan(1e-10);
    expect(Math.abs(r.pValue - c.p) / c.p).toBeLessThan(1e-8);
  });

  it('with one stratum equals the Pearson chi-square of the 2 x W table times (N - 1)/N', () => {
    // common practice: the one-stratum CMH statistic is (N-1)/N times Pearson's X^2 (Agresti, Categorical Data Analysis, §6.4)
    // scipy.stats.chi2_contingency([[10,10,20],[20,20,20]]) gives 2.7777777777777777 (scipy documentation example)
    const r = cmhGeneralAssociation([{ events: [10, 10, 20], rows: [30, 30, 40] }]);
    expect(r.statistic).toBeCloseTo((2.7777777777777777 * 99) / 100, 12);
    expect(r.df).toBe(2);
  });

  it('drops empty columns and strata that cannot vary', () => {
    const r = cmhGeneralAssociation([{ events: [5, 0, 9], rows: [20, 0, 20] }, { events: [0, 0, 0], rows: [1, 0, 0] }]);
    expect(r.df).toBe(1);
    expect(r.pValue).toBeGreaterThan(0);
  });

  it('rejects events above rows', () => {
    expect(() => cmhGeneralAssociation([{ events: [3], rows: [2] }])).toThrow(/exceed/);
  });
});
