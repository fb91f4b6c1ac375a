import { describe, expect, it } from 'vitest';
import { benjaminiHochberg } from '../../../app/core/stats/bh.ts';
import { expectRelClose, loadFixture } from './fixtures.ts';

// scipy.stats.false_discovery_control(p, method='bh') on this machine (test/reference/stats/make-fixtures.py).
const ref = loadFixture<{ cases: { name: string; p: number[]; adjusted: number[] }[] }>('stats/bh.json');

describe('benjaminiHochberg', () => {
  it('rejects 4 of the 15 p-values of the 1995 worked example at q = 0.05', () => {
    // The 15 p-values and the 4 rejections are quoted from Benjamini & Hochberg (1995), from memory.
    const p = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528, 0.759, 1.0];
    const result = benjaminiHochberg(p, 0.05);
    expect(result.rejections).toBe(4);
    expect(result.rejected).toEqual(p.map((_, i) => i < 4));
  });

  it.each(ref.cases.map((c) => [c.name, c] as const))('adjusted p-values match scipy: %s', (_name, c) => {
    const result = benjaminiHochberg(c.p, 0.05);
    result.adjusted.forEach((a, i) => expectRelClose(a, c.adjusted[i] as number, 1e-12));
  });

  it('rejection agrees with the step-up rule k = max{i : p_(i) ≤ i·q/m} on the random case', () => {
    const c = ref.cases[1] as { p: number[] };
    const q = 0.1;
    const sorted = [...c.p].sort((a, b) => a - b);
    const m = sorted.length;
    let k = 0;
    sorted.forEach((p, i) => {
      if (p <= ((i + 1) * q) / m) k = i + 1;
    });
    expect(k).toBeGreaterThan(0);
    expect(benjaminiHochberg(c.p, q).rejections).toBe(k);
  });

  it('is monotone in p and capped at 1', () => {
    const p = [0.9, 0.95, 0.99, 0.2];
    const { adjusted } = benjaminiHochberg(p, 0.05);
    expect(Math.max(...adjusted)).toBeLessThanOrEqual(1);
    expect(adjusted[3]).toBeLessThanOrEqual(adjusted[0] as number);
    expect(adjusted[0]).toBeLessThanOrEqual(adjusted[1] as number);
  });

  it('handles an empty list', () => {
    expect(benjaminiHochberg([], 0.05)).toEqual({ adjusted: [], rejected: [], rejections: 0 });
  });

  it.each([
    [[0.1, NaN], 0.05, /p-value 1/],
    [[1.2], 0.05, /p-value 0/],
    [[0.1], 0, /q must be/],
    [[0.1], 1, /q must be/],
  ])('rejects bad input %j at q = %f', (p, q, message) => {
    expect(() => benjaminiHochberg(p, q)).toThrow(message);
  });
});
