import { describe, expect, it } from 'vitest';
import { chiSquareHomogeneity } from '../../../app/core/stats/chisq.ts';
import { twoProportionZTest } from '../../../app/core/stats/ztest.ts';
import { expectRelClose, loadFixture } from './fixtures.ts';

// scipy.stats.chi2_contingency(table, correction=False) on this machine (test/reference/stats/make-fixtures.py).
const ref = loadFixture<{ cases: { name: string; table: number[][]; statistic: number; df: number; pValue: number }[] }>(
  'stats/chisq.json',
);

describe('chiSquareHomogeneity', () => {
  it("reproduces scipy's documented chi2_contingency example", () => {
    // scipy.stats.chi2_contingency docs: [[10, 10, 20], [20, 20, 20]] -> statistic 2.7777777777777777, p 0.24935220877729619, dof 2.
    const r = chiSquareHomogeneity([
      [10, 10, 20],
      [20, 20, 20],
    ]);
    expectRelClose(r.statistic, 2.7777777777777777, 1e-14);
    expect(r.df).toBe(2);
    expectRelClose(r.pValue, 0.24935220877729619, 1e-13);
  });

  it.each(ref.cases.map((c) => [c.name, c] as const))('matches scipy: %s', (_name, c) => {
    const r = chiSquareHomogeneity(c.table);
    expectRelClose(r.statistic, c.statistic, 1e-12);
    expect(r.df).toBe(c.df);
    expectRelClose(r.pValue, c.pValue, 1e-10);
  });

  it('drops all-zero rows and columns and says which', () => {
    const c = ref.cases.find((x) => x.name === 'zero-row-and-column-tiny-p');
    const r = chiSquareHomogeneity(c?.table ?? []);
    expect(r.droppedRows).toEqual([1]);
    expect(r.droppedColumns).toEqual([2]);
    expect(r.df).toBe(4);
  });

  it('on a 2×2 table equals the square of the pooled two-proportion z', () => {
    // Pearson's 2×2 statistic is z² of the pooled two-proportion test (Agresti, Categorical Data Analysis).
    const r = chiSquareHomogeneity([
      [45, 55],
      [30, 70],
    ]);
    const z = twoProportionZTest(45, 100, 30, 100);
    expectRelClose(r.statistic, z.z ** 2, 1e-12);
    expectRelClose(r.pValue, z.pValue, 1e-10);
  });

  it('returns df 0 and p 1 when fewer than two rows or columns have counts (as scipy does for dof 0)', () => {
    const r = chiSquareHomogeneity([
      [5, 0],
      [7, 0],
    ]);
    expect(r).toEqual({ statistic: 0, df: 0, pValue: 1, droppedRows: [], droppedColumns: [1] });
  });

  it.each([
    [[], /no rows/],
    [[[1, 2], [3]], /row 1 has 1 columns/],
    [[[1, -2]], /count \[0\]\[1\]/],
    [[[1, NaN]], /count \[0\]\[1\]/],
  ])('rejects %j', (table, message) => {
    expect(() => chiSquareHomogeneity(table)).toThrow(message);
  });
});
