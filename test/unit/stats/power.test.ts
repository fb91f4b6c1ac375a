/**
 * Sample sizes and power against outside references: R 4.2.2's stats::power.prop.test
 * (test/reference/remedies/make-power.R) and scipy 1.17.1's root of the z-test power equation
 * (test/reference/remedies/make-normal-power.py).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { detectableMultiplier, normalPower, normalSampleSize, twoProportionPower, twoProportionSampleSize } from '../../../app/core/stats/power.ts';

const REF = new URL('../../reference/remedies/', import.meta.url).pathname;
const prop = JSON.parse(readFileSync(`${REF}power-prop.json`, 'utf8')) as { cases: { p1: number; p2: number; alpha: number; power: number; n: number; power_at_1000: number }[] };
const norm = JSON.parse(readFileSync(`${REF}normal-power.json`, 'utf8')) as { cases: { delta: number; sd: number; alpha: number; power: number; n: number; n_strict: number; power_at_100: number }[] };

describe('two proportions (R power.prop.test, strict = FALSE)', () => {
  it.each(prop.cases.map((c) => [`p1=${c.p1} p2=${c.p2} α=${c.alpha} power=${c.power}`, c] as const))('n and power for %s match R', (_name, c) => {
    expect(twoProportionSampleSize(c.p1, c.p2, { alpha: c.alpha, power: c.power })).toBeCloseTo(c.n, 6);
    expect(twoProportionPower(1000, c.p1, c.p2, c.alpha)).toBeCloseTo(c.power_at_1000, 10);
  });
});

describe('one-sample z test (scipy brentq on the power equation)', () => {
  it.each(norm.cases.map((c) => [`δ=${c.delta} σ=${c.sd} α=${c.alpha} power=${c.power}`, c] as const))('n for %s matches scipy', (_name, c) => {
    expect(Math.abs(normalSampleSize(c.delta, c.sd, { alpha: c.alpha, power: c.power }) / c.n - 1)).toBeLessThan(1e-9);
    expect(Math.abs(normalSampleSize(c.delta, c.sd, { alpha: c.alpha, power: c.power, strict: true }) / c.n_strict - 1)).toBeLessThan(1e-9);
    expect(normalPower(100, c.delta, c.sd, c.alpha, true)).toBeCloseTo(c.power_at_100, 12);
  });

  it('uses the usual 2.8 standard errors at 5% and 80% (common practice)', () => {
    expect(detectableMultiplier(0.05, 0.8)).toBeCloseTo(2.8016, 4);
  });

  it('refuses levels outside (0, 1) and differences ≤ 0 with the argument named', () => {
    expect(() => normalSampleSize(0, 1, { alpha: 0.05, power: 0.8 })).toThrow(/delta/);
    expect(() => normalSampleSize(1, 1, { alpha: 1, power: 0.8 })).toThrow(/alpha/);
    expect(() => twoProportionSampleSize(0.2, 0.2, { alpha: 0.05, power: 0.8 })).toThrow(/differ/);
  });
});
