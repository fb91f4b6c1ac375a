import { describe, expect, it } from 'vitest';
import { kishEss, kishEssOf } from '../../../app/core/stats/ess.ts';

// Kish (1965): ESS = (Σw)²/Σw²; equal weights give n, one non-zero weight gives 1.
describe('kishEss', () => {
  it('equals n for equal weights, whatever their size', () => {
    expect(kishEssOf(Array.from({ length: 250 }, () => 3.7))).toBeCloseTo(250, 10);
  });
  it('equals 1 when one weight carries everything', () => {
    expect(kishEssOf([0, 0, 5, 0])).toBe(1);
  });
  it('worked example: weights 1, 2, 3, 4 give 10²/30 = 10/3', () => {
    expect(kishEssOf([1, 2, 3, 4])).toBeCloseTo(10 / 3, 14);
    expect(kishEss(10, 30)).toBeCloseTo(10 / 3, 14);
  });
  it('two groups of weights 1 and 3, n/2 each: ESS/n = 4²/(2·10) = 0.8', () => {
    const w = [...Array.from({ length: 500 }, () => 1), ...Array.from({ length: 500 }, () => 3)];
    expect(kishEssOf(w) / w.length).toBeCloseTo(0.8, 12);
  });
  it('is 0 when every weight is 0 (the target never takes the logged actions)', () => {
    expect(kishEss(0, 0)).toBe(0);
    expect(kishEssOf([])).toBe(0);
  });
  it.each([
    [-1, 2, /sum of weights/],
    [1, -2, /squared weights/],
    [NaN, 1, /sum of weights/],
    [2, 0, /sum of squared weights is 0/],
  ])('rejects kishEss(%f, %f)', (s, s2, message) => {
    expect(() => kishEss(s, s2)).toThrow(message);
  });
  it('rejects negative weights', () => {
    expect(() => kishEssOf([1, -0.5])).toThrow(/weight must be/);
  });
});
