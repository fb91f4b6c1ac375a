import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { binomialTwoSidedP } from '../../../app/core/stats/binomial.ts';

const fixture = JSON.parse(readFileSync(new URL('../../reference/calibration/binomtest.json', import.meta.url), 'utf8')) as { source: string; cases: { k: number; n: number; p: number; pvalue: number }[] };

describe('binomialTwoSidedP', () => {
  it('issue acceptance: 1 and 2 events in 500 rows at p = 0.016 (scipy.stats.binomtest(1, 500, 0.016) = 0.0063, (2, 500, 0.016) = 0.0297)', () => {
    expect(binomialTwoSidedP(1, 500, 0.016)).toBeCloseTo(0.0063, 4);
    expect(binomialTwoSidedP(2, 500, 0.016)).toBeCloseTo(0.0297, 4);
  });

  it.each(fixture.cases)(`matches ${fixture.source}: k = $k, n = $n, p = $p`, ({ k, n, p, pvalue }) => {
    const got = binomialTwoSidedP(k, n, p);
    if (pvalue < 1e-300) expect(got).toBeLessThan(1e-290);
    else expect(Math.abs(got - pvalue) / pvalue).toBeLessThan(1e-9);
  });

  it('refuses impossible inputs', () => {
    expect(() => binomialTwoSidedP(3, 2, 0.5)).toThrow(/exceed/);
    expect(() => binomialTwoSidedP(1, 2, 1.5)).toThrow();
  });
});
