import { describe, expect, it } from 'vitest';
import { neverLoggedBalance, weightBalance } from '../../../app/core/stats/balance.ts';
import { mulberry32Unit } from '../../../sample-data/prng.ts';

/** mulberry32 (Tommy Ettinger, public domain) in [0, 1), shared with the demo generator. */
const mulberry32 = mulberry32Unit;

interface Sums {
  n: number;
  sumInvP: number[];
  sumInvP2: number[];
}

/** Logs n decisions from a known logging policy over K actions in a few contexts; misLog scales the logged p of action 0. */
function simulate(seed: number, n: number, misLog = 1): Sums {
  const random = mulberry32(seed);
  const policies = [
    [0.7, 0.1, 0.1, 0.1],
    [0.25, 0.25, 0.25, 0.25],
    [0.05, 0.15, 0.3, 0.5],
  ];
  const sums: Sums = { n, sumInvP: [0, 0, 0, 0], sumInvP2: [0, 0, 0, 0] };
  for (let i = 0; i < n; i++) {
    const probs = policies[Math.floor(random() * policies.length)] as number[];
    let u = random();
    let a = 0;
    while (a < probs.length - 1 && u >= (probs[a] as number)) u -= probs[a++] as number;
    const p = (probs[a] as number) * (a === 0 ? misLog : 1);
    (sums.sumInvP[a] as number) += 1 / p;
    (sums.sumInvP2[a] as number) += 1 / (p * p);
  }
  return sums;
}

describe('weightBalance', () => {
  it('hand computation: 4 rows, action x logged with p = 0.5 and 0.25', () => {
    // Rows (action, p): (x, 0.5), (y, 0.5), (x, 0.25), (y, 0.75). X_i = 1[a_i = x]/p_i = 2, 0, 4, 0.
    // B = 6/4 = 1.5; Σ (X_i - B)² = 0.25 + 2.25 + 6.25 + 2.25 = 11; SE = sqrt(11/3/4); z = 0.5/SE.
    const r = weightBalance(4, 2 + 4, 4 + 16);
    expect(r.balance).toBe(1.5);
    expect(r.se).toBeCloseTo(Math.sqrt(11 / 12), 14);
    expect(r.z).toBeCloseTo(0.5 / Math.sqrt(11 / 12), 14);
    // Two-sided normal p of z = 0.52223296786709: 2·(1 - Φ(0.5222)) ≈ 0.6015 (standard normal table).
    expect(r.pValue).toBeCloseTo(0.6015, 3);
  });

  it('z stays within ±4 for every action when the logged propensities are the true ones (40 seeds × 4 actions)', () => {
    const zs: number[] = [];
    for (let seed = 1; seed <= 40; seed++) {
      const s = simulate(seed, 4000);
      for (let a = 0; a < 4; a++) zs.push(weightBalance(s.n, s.sumInvP[a] as number, s.sumInvP2[a] as number).z);
    }
    expect(Math.max(...zs.map(Math.abs))).toBeLessThan(4);
    // Under H0 z is roughly standard normal: its mean is near 0 and its variance near 1.
    const mean = zs.reduce((s, z) => s + z, 0) / zs.length;
    const variance = zs.reduce((s, z) => s + (z - mean) ** 2, 0) / (zs.length - 1);
    expect(Math.abs(mean)).toBeLessThan(0.35);
    expect(variance).toBeGreaterThan(0.6);
    expect(variance).toBeLessThan(1.5);
  });

  it('flags propensities logged 20% too low for one action', () => {
    const s = simulate(7, 10_000, 0.8);
    const r = weightBalance(s.n, s.sumInvP[0] as number, s.sumInvP2[0] as number);
    expect(r.balance).toBeGreaterThan(1.2);
    expect(r.z).toBeGreaterThan(6);
    expect(r.pValue).toBeLessThan(1e-8);
  });

  it('handles zero spread: all rows the action with p = 1 is balanced; p = 0.5 everywhere is not', () => {
    expect(weightBalance(10, 10, 10)).toEqual({ balance: 1, se: 0, z: 0, pValue: 1 });
    expect(weightBalance(10, 20, 40)).toMatchObject({ balance: 2, se: 0, z: Infinity, pValue: 0 });
  });

  it.each([
    [1, 1, 1, /at least 2 rows/],
    [2.5, 1, 1, /rows in group/],
    [10, -1, 1, /sum of 1\/p/],
    [10, 1, NaN, /sum of 1\/p²/],
  ])('rejects (%f, %f, %f)', (n, s1, s2, message) => {
    expect(() => weightBalance(n, s1, s2)).toThrow(message);
  });
});

describe('neverLoggedBalance', () => {
  // scipy.stats.binom.pmf(0, n, eps) on this machine (scipy 1.17): the chance of zero successes in n trials
  it.each([
    [1980, 0.01, 2.2786902975385287e-9],
    [695, 0.01, 0.0009256786459280304],
    [50, 0.05, 0.07694497527671333],
  ])('n = %i, floor %f gives the binomial P(X = 0)', (n, eps, p) => {
    const r = neverLoggedBalance(n, eps);
    expect(Math.abs(r.pValue - p) / p).toBeLessThan(1e-12);
    expect(r.balance).toBe(0);
    expect(Number.isNaN(r.z)).toBe(true);
  });
  it('rejects a floor outside (0, 1)', () => {
    expect(() => neverLoggedBalance(10, 0)).toThrow(RangeError);
  });
});
