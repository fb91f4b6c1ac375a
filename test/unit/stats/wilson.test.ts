import { describe, expect, it } from 'vitest';
import { wilsonInterval } from '../../../app/core/stats/wilson.ts';

// Reference: scipy 1.17.1, scipy.stats.binomtest(k, n).proportion_ci(confidence_level=0.95, method='wilson'),
// run on this machine; the first case is also Newcombe 1998 (Stat Med 17:857) Table I, 81/263: 0.2553 to 0.3662.
const CASES: [number, number, number, number][] = [
  [81, 263, 0.2552885198782742, 0.36620957698280004],
  [0, 20, 0.0, 0.16112515805281935],
  [20, 20, 0.8388748419471808, 1.0],
  [3, 1000, 0.0010207838811386186, 0.008783014053503173],
  [7, 30, 0.11792388144489496, 0.40928326158122164],
];

describe('wilsonInterval', () => {
  it.each(CASES)('%i of %i', (k, n, low, high) => {
    const ci = wilsonInterval(k, n);
    expect(ci.low).toBeCloseTo(low, 12);
    expect(ci.high).toBeCloseTo(high, 12);
  });
  it('stays inside [0, 1] and refuses impossible counts', () => {
    expect(wilsonInterval(0, 0)).toEqual({ low: 0, high: 1 });
    expect(() => wilsonInterval(5, 4)).toThrow(/exceed/);
  });
});
