/**
 * The next-log plan against simulation: logs drawn with the planned exploration for the planned number of days
 * reach the planned precision. Outside reference: the definition of power and coverage (a z test at level α on an
 * estimate whose SE is δ/(z₁₋α/₂ + z_power) rejects a true difference δ with probability `power`, and its interval
 * covers the truth with probability 1 − α), checked by Monte Carlo over seeded logs.
 *
 * Tolerance: 2,000 seeds per case, so a share's Monte Carlo sd is √(p(1 − p)/2000) (0.0089 at p = 0.8, 0.0049 at
 * p = 0.95); a share must lie within 3.5 sd of nominal, and the median SE within 2% of the planned SE.
 */
import { describe, expect, it } from 'vitest';
import { planNextLog, type PlanInputs } from '../../../app/core/remedies/plan.ts';
import { normalQuantile } from '../../../app/core/stats/distributions.ts';
import { mulberry32Unit } from '../../../sample-data/prng.ts';

/** Two segments, three actions; in `a` the logging policy almost never shows action 2, which the target favours. */
const LOGGING = { a: [0.86, 0.1, 0.04], b: [0.5, 0.3, 0.2] } as const;
const TARGET = { a: [0.2, 0.3, 0.5], b: [0.6, 0.2, 0.2] } as const;
const MEANS = { a: [0.3, 0.5, 0.6], b: [0.2, 0.25, 0.4] } as const;
const PER_DAY = { a: 150, b: 250 } as const;
const SEGMENTS = ['a', 'b'] as const;

type Logging = Readonly<Record<'a' | 'b', readonly number[]>>;
const inputsFor = (logging: Logging): PlanInputs => ({
  target: 'sim', actions: ['x0', 'x1', 'x2'], segmentColumns: ['s'], logDays: 10, rewardMin: 0, rewardMax: 1, binary: true,
  segments: SEGMENTS.map((s) => ({
    segment: [s], rowsPerDay: PER_DAY[s], weight: PER_DAY[s] / (PER_DAY.a + PER_DAY.b), minPropensity: null,
    // 0/1 rewards: E[r²] = E[r]
    cells: [0, 1, 2].map((k) => ({ action: `x${k}`, q: TARGET[s][k] as number, share: logging[s][k] as number, mean: MEANS[s][k] as number, meanSquare: MEANS[s][k] as number })),
  })),
});
const inputs = inputsFor(LOGGING);
/** for the pooled case: weights of at most 0.5/0.12, so the estimate is near normal at a few thousand rows */
const LOGGING_POOLED: Logging = { a: [0.78, 0.1, 0.12], b: [0.5, 0.3, 0.2] };

const ALPHA = 0.05;
const POWER = 0.8;
const SEEDS = 2000;
const Z = normalQuantile(1 - ALPHA / 2);

/** Draw `n` rows of one segment under ε-greedy logging with share η; the IPS estimate of the target's value and its SE. */
function simulate(seed: number, n: number, eta: number, which: readonly ('a' | 'b')[], perDay: Record<'a' | 'b', number>, logging: Logging) {
  const u = mulberry32Unit(seed);
  const total = which.reduce((t, s) => t + perDay[s], 0);
  let sum = 0, sum2 = 0;
  for (let i = 0; i < n; i++) {
    let s = which[0] as 'a' | 'b';
    if (which.length > 1) s = u() * total < perDay.a ? 'a' : 'b';
    const mu = logging[s].map((m) => (1 - eta) * m + eta / 3);
    const x = u();
    const a = x < (mu[0] as number) ? 0 : x < (mu[0] as number) + (mu[1] as number) ? 1 : 2;
    const r = u() < (MEANS[s][a] as number) ? 1 : 0;
    const wr = ((TARGET[s][a] as number) / (mu[a] as number)) * r;
    sum += wr;
    sum2 += wr * wr;
  }
  const value = sum / n;
  return { value, se: Math.sqrt((sum2 / n - value * value) / (n - 1)) };
}

const truth = (s: 'a' | 'b') => TARGET[s].reduce((t, q, k) => t + q * (MEANS[s][k] as number), 0);
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)] as number;

describe('planned exploration reaches the planned precision', () => {
  const delta = 0.08;
  const plan = planNextLog(inputs, { delta, power: POWER, alpha: ALPHA, days: 10 });
  const pooled = planNextLog(inputsFor(LOGGING_POOLED), { delta: 0.06, power: POWER, alpha: ALPHA, days: 30 });
  const cases = [
    ['segment a (an action hardly logged)', plan.segments[0]!, ['a'] as const, truth('a'), delta, plan.targetSe, LOGGING],
    ['segment b', plan.segments[1]!, ['b'] as const, truth('b'), delta, plan.targetSe, LOGGING],
    ['the whole log, one share everywhere', pooled.overall, ['a', 'b'] as const, (PER_DAY.a * truth('a') + PER_DAY.b * truth('b')) / (PER_DAY.a + PER_DAY.b), 0.06, pooled.targetSe, LOGGING_POOLED],
  ] as const;

  it('needs exploration where the target chooses what the log hardly shows', () => {
    expect(plan.segments[0]!.share).toBeGreaterThan(0);
    expect(plan.segments[0]!.reachable).toBe(true);
  });

  it('plans a never-logged pair with the bound E[r²] ≤ max(r_min², r_max²), so it asks for at least as much exploration as with the truth', () => {
    const unknown: PlanInputs = { ...inputs, segments: inputs.segments.map((s, i) => (i === 0 ? { ...s, cells: s.cells.map((c, k) => (k === 2 ? { ...c, share: 0, mean: null, meanSquare: null } : c)) } : s)) };
    const a = planNextLog(unknown, { delta, power: POWER, alpha: ALPHA, days: 10 }).segments[0]!;
    expect(a.share).toBeGreaterThanOrEqual(plan.segments[0]!.share);
  });

  it.each(cases)('%s: power, coverage and SE over 2,000 seeded logs', (_name, row, which, value, delta, targetSe, logging) => {
    const n = Math.ceil(row.rows!);
    expect(row.reachable).toBe(true);
    expect(row.days).toBeCloseTo(row.rows! / row.rowsPerDay, 9);
    let rejected = 0, covered = 0;
    const ses: number[] = [];
    for (let seed = 1; seed <= SEEDS; seed++) {
      const e = simulate(seed * 7919 + which.length, n, row.share, which, PER_DAY, logging);
      // a true difference δ from the reference value − δ is detected when the interval excludes the reference
      if (Math.abs(e.value - (value - delta)) > Z * e.se) rejected++;
      if (Math.abs(e.value - value) <= Z * e.se) covered++;
      ses.push(e.se);
    }
    const power = rejected / SEEDS, coverage = covered / SEEDS;
    console.log(`${_name}: η = ${row.share}, ${n} rows (${(n / row.rowsPerDay).toFixed(2)} days): power ${power.toFixed(4)} (nominal ${POWER}), coverage ${coverage.toFixed(4)} (nominal ${1 - ALPHA}), median SE / planned ${(median(ses) / targetSe).toFixed(4)}`);
    expect(Math.abs(power - POWER)).toBeLessThan(3.5 * Math.sqrt((POWER * (1 - POWER)) / SEEDS));
    expect(Math.abs(coverage - (1 - ALPHA))).toBeLessThan(3.5 * Math.sqrt((ALPHA * (1 - ALPHA)) / SEEDS));
    expect(Math.abs(median(ses) / targetSe - 1)).toBeLessThan(0.02);
  });

  it('costs expected reward where exploring moves decisions from better to worse actions', () => {
    // in b the logging policy's value exceeds the uniform policy's, so mixing in uniform costs reward
    const b = planNextLog(inputs, { delta: 0.02, power: POWER, alpha: ALPHA, days: 10 }).segments[1]!;
    const uniformB = MEANS.b.reduce((t, m) => t + m / 3, 0);
    const loggingB = LOGGING.b.reduce((t, m, k) => t + m * (MEANS.b[k] as number), 0);
    expect(b.cost).toBeCloseTo(b.share * (loggingB - uniformB), 12);
  });
});
