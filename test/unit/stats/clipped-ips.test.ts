/**
 * Clipped IPS and its bias bound against a direct numpy computation on a generated log
 * (test/reference/remedies/make-clipped.py; Bottou et al. 2013, JMLR 14, §4.5). The estimator is given the full
 * sums and only the rows above the smallest cap, as the audit gives it the cube's sums and the clip rows.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { clippedIps } from '../../../app/core/stats/clipped-ips.ts';
import { compensatedSum } from '../../../app/core/stats/sum.ts';

interface Fixture {
  reward_min: number;
  reward_max: number;
  rows: { w: number; r: number | null }[];
  caps: { cap: number; value: number; se: number; clipped_mass: number; bias_low: number; bias_high: number; bias_bound: number; ess: number; clipped_rows: number }[];
}
const fx = JSON.parse(readFileSync(new URL('../../reference/remedies/clipped.json', import.meta.url).pathname, 'utf8')) as Fixture;

const rewarded = fx.rows.filter((x) => x.r !== null) as { w: number; r: number }[];
const smallest = Math.min(...fx.caps.map((c) => c.cap));
const sums = {
  n: rewarded.length,
  sumWR: compensatedSum(rewarded.map((x) => x.w * x.r)),
  sumW2R2: compensatedSum(rewarded.map((x) => x.w * x.w * x.r * x.r)),
  sumW: compensatedSum(fx.rows.map((x) => x.w)),
  sumW2: compensatedSum(fx.rows.map((x) => x.w * x.w)),
  above: fx.rows.filter((x) => x.w > smallest),
  rewardMin: fx.reward_min,
  rewardMax: fx.reward_max,
};
const rel = (a: number, b: number) => (a === b ? 0 : Math.abs(a - b) / Math.max(Math.abs(a), Math.abs(b)));

describe('clipped IPS (numpy reference)', () => {
  it.each(fx.caps.map((c) => [c.cap, c] as const))('cap %s: estimate, se, bias bound and ESS to 1e-12 relative', (_cap, c) => {
    const e = clippedIps(sums, c.cap);
    expect(rel(e.value, c.value)).toBeLessThan(1e-12);
    expect(rel(e.se, c.se)).toBeLessThan(1e-12);
    expect(rel(e.clippedMass, c.clipped_mass)).toBeLessThan(1e-12);
    expect(rel(e.biasLow, c.bias_low)).toBeLessThan(1e-12);
    expect(rel(e.biasHigh, c.bias_high)).toBeLessThan(1e-12);
    expect(rel(e.biasBound, c.bias_bound)).toBeLessThan(1e-12);
    expect(rel(e.ess, c.ess)).toBeLessThan(1e-12);
    expect(e.clippedRows).toBe(c.clipped_rows);
    expect(e.mseBound).toBeCloseTo(e.biasBound ** 2 + e.se ** 2, 15);
  });

  it('gives the same answer whatever order the rows above the cap come in', () => {
    const reversed = clippedIps({ ...sums, above: [...sums.above].reverse() }, 10);
    expect(reversed).toEqual(clippedIps(sums, 10));
  });

  it('refuses a cap ≤ 0, a reversed reward range and too few rows', () => {
    expect(() => clippedIps(sums, 0)).toThrow(/cap/);
    expect(() => clippedIps({ ...sums, rewardMin: 2, rewardMax: 1 }, 5)).toThrow(/rewardMin/);
    expect(() => clippedIps({ ...sums, n: 1 }, 5)).toThrow(/2 rewarded rows/);
  });
});
