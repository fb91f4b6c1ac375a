import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { gpdFit, paretoKThreshold, psis, psisKhatFromTail, psisTailLength } from '../../../app/core/stats/psis.ts';
import { kishEssOf } from '../../../app/core/stats/ess.ts';

// Reference values from R's loo 2.5.1 (Debian r-cran-loo), written by test/reference/psis/make-fixtures.R.
interface PsisCase {
  name: string;
  description: string;
  S: number;
  paretoK: number | null; // null = loo's Inf
  tailLength: number;
  nEff: number;
  logRatios: number[];
  smoothedLogWeights: number[];
}
interface Fixtures {
  gpdfit: { x: number[]; default: { k: number; sigma: number }; noPriorGrid80: { k: number; sigma: number } };
  cases: PsisCase[];
}
const fixtures = JSON.parse(
  readFileSync(new URL('../../reference/psis/fixtures.json', import.meta.url), 'utf8'),
) as Fixtures;

function expectRelClose(actual: number, expected: number, rel: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(rel * Math.abs(expected));
}

describe('gpdFit (Zhang & Stephens 2009, loo::gpdfit)', () => {
  const { x } = fixtures.gpdfit;

  it("matches loo's test value on set.seed(123); rexp(100) with the default grid and prior", () => {
    // loo's test suite (tests/testthat/test_gpdfit.R) gives k = 0.07036687912873694; loo 2.5.1 on this machine agrees.
    expect(fixtures.gpdfit.default.k).toBe(0.07036687912873694);
    const fit = gpdFit(x);
    expectRelClose(fit.k, 0.07036687912873694, 1e-12);
    expectRelClose(fit.sigma, fixtures.gpdfit.default.sigma, 1e-12);
  });

  it('matches loo without the prior and with an 80-point grid minimum', () => {
    const fit = gpdFit(x, { wip: false, minGridPoints: 80 });
    expectRelClose(fit.k, fixtures.gpdfit.noPriorGrid80.k, 1e-12);
    expectRelClose(fit.sigma, fixtures.gpdfit.noPriorGrid80.sigma, 1e-12);
  });

  it('does not depend on input order when sorting', () => {
    expect(gpdFit([...x].reverse())).toEqual(gpdFit(x));
  });

  it.each([
    [[1], /at least 2/],
    [[1, NaN, 2], /finite/],
  ])('rejects bad input %j', (input, message) => {
    expect(() => gpdFit(input)).toThrow(message);
  });
});

describe('psis against loo::psis(log_ratios, r_eff = 1)', () => {
  it.each(fixtures.cases.map((c) => [c.name, c] as const))('%s', (_name, c) => {
    const result = psis(c.logRatios);
    expect(result.tailLength).toBe(c.tailLength);
    expect(psisTailLength(c.S)).toBe(c.tailLength);
    if (c.paretoK === null) expect(result.khat).toBe(Infinity);
    else expectRelClose(result.khat, c.paretoK, 1e-8);
    expect(result.smoothedLogWeights).toHaveLength(c.S);
    // An absolute error of 1e-8 on a log weight is a relative error of 1e-8 on the weight; relative on the log otherwise.
    result.smoothedLogWeights.forEach((v, i) => {
      const ref = c.smoothedLogWeights[i] as number;
      expect(Math.abs(v - ref)).toBeLessThanOrEqual(1e-8 * Math.max(1, Math.abs(ref)));
    });
  });

  it.each(fixtures.cases.map((c) => [c.name, c] as const))(
    'psisKhatFromTail on the M + 1 largest log weights equals psis().khat: %s',
    (_name, c) => {
      const top = [...c.logRatios].sort((a, b) => b - a).slice(0, c.tailLength + 1);
      expect(psisKhatFromTail(top, c.S)).toBe(psis(c.logRatios).khat);
      // Extra values beyond M + 1 are ignored.
      const more = [...c.logRatios].sort((a, b) => b - a).slice(0, Math.min(c.S, c.tailLength + 10));
      expect(psisKhatFromTail(more, c.S)).toBe(psis(c.logRatios).khat);
    },
  );

  it.each(fixtures.cases.map((c) => [c.name, c] as const))(
    "Kish ESS of the normalized smoothed weights equals loo's n_eff: %s",
    (_name, c) => {
      // loo's psis_n_eff with r_eff = 1 is 1 / Σ w̃², w̃ the normalized smoothed weights, i.e. Kish's (Σw)²/Σw².
      const w = psis(c.logRatios).smoothedLogWeights.map((v) => Math.exp(v));
      expectRelClose(kishEssOf(w), c.nEff, 1e-9);
    },
  );

  it('is invariant to adding a constant to every log weight, apart from that constant', () => {
    const c = fixtures.cases.find((x) => x.name === 'pareto-0.7') as PsisCase;
    const shifted = psis(c.logRatios.map((v) => v + 40));
    const base = psis(c.logRatios);
    expectRelClose(shifted.khat, base.khat, 1e-9);
  });

  it('keeps zero weights (log weight -Infinity) at zero', () => {
    const c = fixtures.cases.find((x) => x.name === 'lognormal-wide') as PsisCase;
    const withZeros = [...c.logRatios, -Infinity, -Infinity];
    const result = psis(withZeros);
    expect(result.smoothedLogWeights.slice(-2)).toEqual([-Infinity, -Infinity]);
    expect(Number.isFinite(result.khat)).toBe(true);
  });

  it.each([
    [[], /at least one/],
    [[0, NaN, 1], /finite/],
    [[0, Infinity], /finite/],
    [[-Infinity, -Infinity], /all weights are zero/],
  ])('rejects bad log weights %j', (input, message) => {
    expect(() => psis(input)).toThrow(message);
  });
});

describe('psisKhatFromTail input checks', () => {
  it('needs M + 1 values', () => {
    // S = 1000: M = ceil(min(200, 3·sqrt(1000) = 94.87)) = 95, so 96 values.
    const top = Array.from({ length: 95 }, (_, i) => -i / 10);
    expect(() => psisKhatFromTail(top, 1000)).toThrow(/needs the 96 largest/);
  });
  it('needs descending order', () => {
    const top = Array.from({ length: 96 }, (_, i) => -i / 10);
    [top[3], top[4]] = [top[4] as number, top[3] as number];
    expect(() => psisKhatFromTail(top, 1000)).toThrow(/sorted descending/);
  });
  it('returns Infinity for a tail shorter than 5, as psis does', () => {
    // S = 20: M = ceil(min(4, 13.4)) = 4.
    expect(psisKhatFromTail([3, 2, 1, 0, -1], 20)).toBe(Infinity);
  });
});

describe('psisTailLength and paretoKThreshold', () => {
  it.each([
    // M = ceil(min(0.2·S, 3·sqrt(S))) (Vehtari et al. 2024): 0.2·S binds only below S = 225.
    [20, 4],
    [100, 20],
    [225, 45],
    [1000, 95],
    [20000, 425],
  ])('S = %i gives M = %i', (S, M) => {
    expect(psisTailLength(S)).toBe(M);
  });

  it.each([
    // min(1 - 1/log10(S), 0.7) (Vehtari et al. 2024, from memory): 1 - 1/2 at S = 100, 1 - 1/3 at S = 1000.
    [100, 0.5],
    [1000, 1 - 1 / 3],
    [10_000, 0.7],
    [1e6, 0.7],
  ])('S = %i gives threshold %f', (S, t) => {
    expect(paretoKThreshold(S)).toBeCloseTo(t, 14);
  });

  it('rejects sample sizes it cannot use', () => {
    expect(() => psisTailLength(0)).toThrow(/whole number/);
    expect(() => psisTailLength(2.5)).toThrow(/whole number/);
    expect(() => paretoKThreshold(1)).toThrow(/> 1/);
  });
});
