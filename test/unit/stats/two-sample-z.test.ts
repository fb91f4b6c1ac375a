import { describe, expect, it } from 'vitest';
import { twoSampleZ } from '../../../app/core/stats/two-sample-z.ts';
import { expectRelClose, loadFixture } from './fixtures.ts';

interface Fixture { source: string; cases: { a: number; se_a: number; b: number; se_b: number; z: number; p: number }[] }

describe('twoSampleZ', () => {
  // Outside values: scipy (test/reference/stats/make-two-sample-z.py): Welch's statistic from
  // scipy.stats.ttest_ind_from_stats(equal_var=False) and 2 * scipy.stats.norm.sf(|z|).
  const fixture = loadFixture<Fixture>('stats/two-sample-z.json');
  it.each(fixture.cases)('z and p match scipy for $a ± $se_a vs $b ± $se_b', (c) => {
    const r = twoSampleZ(c.a, c.se_a, c.b, c.se_b)!;
    expectRelClose(r.z, c.z, 1e-9);
    expectRelClose(r.pValue, c.p, 1e-7);
  });

  it('is null without both estimates and a positive combined standard error', () => {
    expect(twoSampleZ(null, 0.1, 1, 0.1)).toBeNull();
    expect(twoSampleZ(1, 0, 1, 0)).toBeNull();
    expect(twoSampleZ(1, Number.NaN, 1, 0.1)).toBeNull();
    expect(twoSampleZ(1, -1, 1, 0.1)).toBeNull();
  });
});
