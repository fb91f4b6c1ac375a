/**
 * Calibration: honest logs (logged propensities are exactly the probabilities the logging policy used)
 * of several hard designs, each audited over repeated seeds. A deciding check that fails on an honest
 * log is a false alarm; its rate must stay within its nominal level, allowing for chance: at most the
 * 99.9% quantile of Binomial(seeds, level) failures (scipy.stats.binom.ppf), the level being balance.q =
 * 0.01 for the deciding checks (Benjamini–Hochberg at q bounds the chance of any rejection by q when every
 * null holds; Benjamini & Hochberg 1995, Theorem 1) and drift.reward.q / drift.policy.q = 0.05 for the
 * warnings of the drift checks. A deciding check that is a measurement rather than a test (support.target at 2 rows
 * per cell: the log never shows the target's action in about 11% of segments) fails on every such log by design;
 * its measured value is checked against the range its distribution gives instead. Planted defects (mis-logged propensities in otherwise honest logs, one with an
 * odd below-floor row added) must be detected and located in at least 19 of 20 logs. The figures are printed,
 * and summarised in README.md ("What the audit checks").
 */
import { afterAll, describe, expect, it } from 'vitest';
import { runChecks } from '../../app/core/audit.ts';
import { balanceWeights } from '../../app/core/checks/balance-weights.ts';
import { BLOCKING } from '../../app/core/checks/registry.ts';
import type { CheckResult } from '../../app/core/model/report.ts';
import { doublyRobust, ips, snips } from '../../app/core/stats/estimators.ts';
import type { EstimatorCell } from '../../app/core/cube/types.ts';
import { verdictOf } from '../../app/core/verdict.ts';
import { Xoshiro128 } from '../../sample-data/prng.ts';
import { contextOf, type ContextOptions, type Rows } from '../core/checks/build.ts';

/** 99.9% quantiles of Binomial(seeds, level): scipy.stats.binom.ppf(0.999, seeds, level). */
const TOLERANCE: Record<string, number> = { '10@0.01': 2, '20@0.01': 3, '50@0.01': 4, '10@0.05': 4, '20@0.05': 5, '50@0.05': 8 };

/** 2 rows per cell: each of 200 segments holds 12 rows over 6 actions at p = 1/6, so a segment logs no a at all
 * with probability (5/6)^12 = 0.1122 (binomial), and the number of such segments is Binomial(200, 0.1122): its
 * 99.9% central interval is [9, 38] (scipy.stats.binom.interval(0.999, 200, (5/6)**12)). always:a puts 1/200 of
 * its mass on each segment, so its support deficit lies in [9, 38] / 200 on 99.9% of honest logs. */
const SPARSE_CELL_DEFICIT = { low: 9 / 200, high: 38 / 200 };
/** 95% coverage of the audit's own DR interval over 50 honest logs: at least the 0.1% quantile of
 * Binomial(50, 0.95) = 43 covered (scipy.stats.binom.ppf(0.001, 50, 0.95)). */
const DR_COVERED_MIN_OF_50 = 43;

/** xoshiro128** (sample-data/prng.ts). mulberry32 alone is not used here: on these designs its consecutive
 * outputs gave balance z of −4 to −5 in 3 of 20 uniform logs, which xoshiro128** does not. */
const stream = (seed: number) => {
  const x = new Xoshiro128(seed);
  return () => x.uniform();
};

interface Design {
  readonly name: string;
  readonly seeds: number;
  readonly options: ContextOptions;
  /** rows of one honest log */
  readonly rows: (random: () => number) => Rows[];
  /** the first primary target's true value, where the audit's DR interval is scored against it */
  readonly truth?: number;
  /** a deciding check whose failure on this design is a true statement about the log, not a false alarm:
   * its metric is checked against the range its distribution gives instead of the nominal level */
  readonly expectedFail?: { readonly id: string; readonly metric: string; readonly low: number; readonly high: number; readonly why: string };
}

const mean = (xs: readonly number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
/** sample standard deviation (n − 1) */
const sd = (xs: readonly number[]) => Math.sqrt(xs.reduce((s, x) => s + (x - mean(xs)) ** 2, 0) / (xs.length - 1));

/** Draws an index from a probability vector. */
function draw(random: () => number, probs: readonly number[]): number {
  let u = random();
  for (let i = 0; i < probs.length - 1; i++) {
    u -= probs[i] as number;
    if (u < 0) return i;
  }
  return probs.length - 1;
}

/** n decisions per segment over `days`, logged with propensity probs(segment)[action]; Bernoulli reward θ(s, a). */
function honest(random: () => number, segments: number, perSegment: number, actions: readonly string[], probs: (s: number) => readonly number[], days: number): Rows[] {
  const counts = new Map<string, { segment: string[]; action: string; bucket: number; p: number; r: number; count: number }>();
  for (let s = 0; s < segments; s++) {
    const pr = probs(s);
    for (let i = 0; i < perSegment; i++) {
      const a = draw(random, pr);
      const bucket = Math.floor(random() * days);
      const r = random() < 0.2 + 0.05 * (a % 4) + 0.1 * (s % 3) ? 1 : 0;
      const k = `${s}|${a}|${bucket}|${r}`;
      const e = counts.get(k);
      if (e) e.count++;
      else counts.set(k, { segment: [`s${s}`], action: actions[a] as string, bucket, p: pr[a] as number, r, count: 1 });
    }
  }
  return [...counts.values()];
}

const A4 = ['a', 'b', 'c', 'd'];
const DESIGNS: readonly Design[] = [
  {
    name: 'many sparse segments, a rare action (300 segments, p = 0.03, about 7 expected per segment)',
    seeds: 10,
    options: { days: 10, targets: [{ spec: 'uniform' }] },
    rows: (random) => honest(random, 300, 240, A4, () => [0.03, 0.97 / 3, 0.97 / 3, 0.97 / 3], 10),
  },
  {
    name: 'ε-greedy over 3 actions, ε = 0.1 (tied weights)',
    seeds: 20,
    options: { days: 10, targets: [{ spec: 'uniform' }] },
    rows: (random) => honest(random, 6, 5000, ['a', 'b', 'c'], (s) => [0, 1, 2].map((a) => (a === s % 3 ? 0.9 + 0.1 / 3 : 0.1 / 3)), 10),
  },
  {
    name: 'uniform logging, uniform target',
    seeds: 20,
    options: { days: 10, targets: [{ spec: 'uniform' }] },
    rows: (random) => honest(random, 6, 5000, ['a', 'b', 'c', 'd', 'e'], () => [0.2, 0.2, 0.2, 0.2, 0.2], 10),
  },
  {
    name: 'an action ineligible in half the segments (p = 0 there, the others renormalised), target always:a',
    seeds: 20,
    options: { days: 10, targets: [{ spec: 'always:a' }] },
    rows: (random) => honest(random, 6, 5000, A4, (s) => (s < 3 ? [1 / 3, 1 / 3, 1 / 3, 0] : [0.25, 0.25, 0.25, 0.25]), 10),
  },
  {
    name: 'heavy but finite tails (each row its own p for a, log-uniform in [0.02, 0.6]), target always:a',
    seeds: 20,
    options: { days: 10, targets: [{ spec: 'always:a' }] },
    rows: (random) => {
      const rows: Rows[] = [];
      for (let i = 0; i < 20000; i++) {
        const s = i % 6;
        const pa = Math.exp(Math.log(0.02) + random() * (Math.log(0.6) - Math.log(0.02)));
        const a = random() < pa ? 0 : 1 + Math.floor(random() * 3);
        const p = a === 0 ? pa : (1 - pa) / 3;
        rows.push({ segment: [`s${s}`], action: A4[a] as string, bucket: Math.floor(random() * 10), p, r: random() < 0.3 ? 1 : 0 });
      }
      return rows;
    },
  },
  {
    name: '2 rows per (segment, action) cell (200 segments × 12 rows, uniform logging over 6 actions, Bernoulli rewards), target always:a',
    seeds: 50,
    options: { days: 10, targets: [{ spec: 'always:a' }] },
    rows: (random) => honest(random, 200, 12, ['a', 'b', 'c', 'd', 'e', 'f'], () => [1, 1, 1, 1, 1, 1].map((x) => x / 6), 10),
    // θ(s, a) = 0.2 + 0.1 · (s mod 3) in honest(); 67, 67 and 66 of the 200 segments have s mod 3 = 0, 1, 2
    truth: (67 * 0.2 + 67 * 0.3 + 66 * 0.4) / 200,
    expectedFail: { id: 'support.target', metric: 'always:a.deficit', ...SPARSE_CELL_DEFICIT, why: 'about 11% of segments never log a, and always:a puts its mass there' },
  },
];

/** A defect planted in an otherwise honest uniform log (6 segments × 5000 rows, 5 actions at p = 0.2, 10 days). */
interface Planted {
  readonly name: string;
  /** the logging policy's real probabilities in segment s on day b */
  readonly draw?: (s: number, b: number) => readonly number[];
  /** the propensity the log records for action a drawn with probability p */
  readonly logged?: (s: number, a: number, b: number, p: number) => number;
  readonly extra?: readonly Rows[];
  /** a balance.weights failure finds it when it names the action and either the segment or a window over the day */
  readonly action: string;
  readonly segment?: string;
  readonly day?: number;
}

const A5 = ['a', 'b', 'c', 'd', 'e'];
const UNIFORM5 = [0.2, 0.2, 0.2, 0.2, 0.2];
const ODD_ROW: Rows = { segment: ['s0'], action: 'a', bucket: 0, p: 0.005, r: 0 };
const PLANTED: readonly Planted[] = [
  { name: 'a\'s propensity logged doubled on day 4 in every segment', logged: (_s, a, b, p) => (a === 0 && b === 4 ? 2 * p : p), action: 'a', day: 4 },
  { name: 'the same, with one odd row of a at p = 0.005 elsewhere', logged: (_s, a, b, p) => (a === 0 && b === 4 ? 2 * p : p), extra: [ODD_ROW], action: 'a', day: 4 },
  { name: 'a\'s propensity logged at half its value in segment s2, the whole log', logged: (s, a, _b, p) => (a === 0 && s === 2 ? p / 2 : p), action: 'a', segment: 's2' },
  { name: 'segment s1 logs the old propensities from day 5 while a new policy favours a (0.6)', draw: (s, b) => (s === 1 && b >= 5 ? [0.6, 0.1, 0.1, 0.1, 0.1] : UNIFORM5), action: 'a', segment: 's1', day: 7 },
];

function plantedRows(random: () => number, d: Planted): Rows[] {
  const counts = new Map<string, { segment: string[]; action: string; bucket: number; p: number; r: number; count: number }>();
  for (let s = 0; s < 6; s++) {
    for (let i = 0; i < 5000; i++) {
      const bucket = Math.floor(random() * 10);
      const probs = d.draw ? d.draw(s, bucket) : UNIFORM5;
      const a = draw(random, probs);
      const p = d.logged ? d.logged(s, a, bucket, UNIFORM5[a] as number) : (UNIFORM5[a] as number);
      const r = random() < 0.2 + 0.05 * (a % 4) + 0.1 * (s % 3) ? 1 : 0;
      const k = `${s}|${a}|${bucket}|${r}|${p}`;
      const e = counts.get(k);
      if (e) e.count++;
      else counts.set(k, { segment: [`s${s}`], action: A5[a] as string, bucket, p, r, count: 1 });
    }
  }
  return [...counts.values(), ...(d.extra ?? [])];
}

const DAY_MS = 86_400_000;
/** whether a balance.weights finding locates the planted defect (the per-check builder's days start 2026-01-01) */
function locates(f: { status: string; action?: string; segment: Record<string, string>; window?: { from: string; to: string } }, d: Planted): boolean {
  if (f.status !== 'fail' || f.action !== d.action) return false;
  const inSegment = d.segment !== undefined && f.segment.s0 === d.segment;
  const origin = Date.UTC(2026, 0, 1);
  const overDay = d.day !== undefined && !!f.window && Date.parse(f.window.from) <= origin + (d.day + 1) * DAY_MS - 1 && Date.parse(f.window.to) > origin + d.day * DAY_MS && (d.segment === undefined || f.segment.s0 === undefined || f.segment.s0 === d.segment);
  return inSegment || overDay;
}

const table: string[] = [];
const print = () => console.log(['calibration: failures / seeds on honest logs', ...table].join('\n'));

describe('calibration on honest logs', () => {
  afterAll(print);
  for (const design of DESIGNS) {
    it(`no deciding check fails more often than its nominal level: ${design.name}`, { timeout: 600_000 }, () => {
      const fails = new Map<string, number>();
      const warns = new Map<string, number>();
      const verdicts = new Map<string, number>();
      let drCovered = 0;
      const drValues: number[] = [];
      const drSes: number[] = [];
      const expectedOutside: number[] = [];
      for (let seed = 1; seed <= design.seeds; seed++) {
        const random = stream(1000 * seed + design.name.length);
        const results: CheckResult[] = runChecks(contextOf(design.rows(random), design.options));
        if (design.truth !== undefined) {
          const m = results.find((r) => r.id === 'estimate.preview')?.findings[0]?.metrics ?? {};
          const dr = m.dr as number, se = m.dr_se as number;
          // the audit's own 95% interval, value ± 1.96 SE (estimate.preview)
          if (Math.abs(dr - design.truth) <= 1.959964 * se) drCovered++;
          drValues.push(dr);
          drSes.push(se);
        }
        if (design.expectedFail) {
          const e = design.expectedFail;
          const v = results.find((r) => r.id === e.id)?.metrics[e.metric] as number;
          if (!(v >= e.low && v <= e.high)) expectedOutside.push(v);
        }
        for (const r of results) {
          if (r.status === 'fail' || r.status === 'error') fails.set(r.id, (fails.get(r.id) ?? 0) + 1);
          if (r.status !== 'pass' && r.status !== 'skipped') warns.set(r.id, (warns.get(r.id) ?? 0) + 1);
        }
        const v = verdictOf(results).verdict;
        verdicts.set(v, (verdicts.get(v) ?? 0) + 1);
      }
      const tol = TOLERANCE[`${design.seeds}@0.01`] as number;
      const driftTol = TOLERANCE[`${design.seeds}@0.05`] as number;
      const deciding = [...BLOCKING].filter((id) => id !== 'identity.duplicates' && id !== 'schema.roles');
      const expected = design.expectedFail;
      table.push(`  ${design.name} (${design.seeds} seeds): fails ${deciding.map((id) => `${id} ${fails.get(id) ?? 0}${id === expected?.id ? ` (expected: ${expected.why})` : ''}`).join(', ')}; drift warnings ${['drift.reward', 'drift.policy'].map((id) => `${id} ${warns.get(id) ?? 0}`).join(', ')}; verdicts ${[...verdicts].map(([v, n]) => `${v} ${n}`).join(', ')}${design.truth !== undefined ? `; the audit's DR 95% interval covers the true value in ${drCovered} of ${design.seeds}, mean SE / SD of the DR values ${(mean(drSes) / sd(drValues)).toFixed(3)}` : ''}`);
      if (expected) expect(expectedOutside, `${expected.id} ${expected.metric} outside [${expected.low}, ${expected.high}]`).toEqual([]);
      if (design.truth !== undefined) expect(drCovered).toBeGreaterThanOrEqual(DR_COVERED_MIN_OF_50);
      for (const id of BLOCKING) if (id !== expected?.id) expect(fails.get(id) ?? 0, `${id} failed on ${fails.get(id)} of ${design.seeds} honest logs (tolerance ${tol})`).toBeLessThanOrEqual(tol);
      for (const id of ['drift.reward', 'drift.policy']) expect(warns.get(id) ?? 0, `${id} warned on ${warns.get(id)} of ${design.seeds} honest logs (tolerance ${driftTol})`).toBeLessThanOrEqual(driftTol);
      // uniform logging with the uniform target: nothing blocks, ever; any caveat is a drift false alarm within its level
      if (design.name.startsWith('uniform logging')) {
        expect(verdicts.get('not-supported') ?? 0).toBe(0);
        expect(verdicts.get('supported') ?? 0).toBeGreaterThanOrEqual(design.seeds - driftTol);
      }
    });
  }

  for (const defect of PLANTED) {
    it(`detects the planted defect in at least 19 of 20 logs: ${defect.name}`, () => {
      let found = 0;
      const seeds = 20;
      for (let seed = 1; seed <= seeds; seed++) {
        const random = stream(5000 + 31 * seed + defect.name.length);
        const r = balanceWeights.run(contextOf(plantedRows(random, defect), { days: 10, targets: [{ spec: 'uniform' }] }));
        if (r.status === 'fail' && r.findings.some((f) => locates(f, defect))) found++;
      }
      table.push(`  planted: ${defect.name}: detected and located in ${found} of ${seeds} logs`);
      expect(found).toBeGreaterThanOrEqual(19);
    });
  }

  it('doubly robust 95% intervals cover the true value in [0.92, 0.98] of replicates with about 2 rows per cell (uniform logging over 6 actions, always:a0)', () => {
    const random = stream(77);
    const segments = 200;
    const actions = ['a0', 'a1', 'a2', 'a3', 'a4', 'a5'];
    const theta = Array.from({ length: segments }, () => actions.map(() => 0.1 + 0.8 * random()));
    const truth = theta.reduce((s, t) => s + (t[0] as number), 0) / segments;
    const target = (key: string, a: string) => (a === 'a0' ? 1 : 0) + 0 * key.length;
    const replicates = 300;
    const covered = { dr: 0, ips: 0, snips: 0 };
    for (let rep = 0; rep < replicates; rep++) {
      const sums = new Map<string, { s: number; a: number; n: number; r: number }>();
      for (let i = 0; i < segments * actions.length * 2; i++) {
        const s = Math.floor(random() * segments);
        const a = Math.floor(random() * actions.length);
        const r = random() < (theta[s]![a] as number) ? 1 : 0;
        const k = `${s}|${a}`;
        const e = sums.get(k) ?? { s, a, n: 0, r: 0 };
        e.n++;
        e.r += r;
        sums.set(k, e);
      }
      const p = 1 / actions.length;
      const cells: EstimatorCell[] = [...sums.values()].map((e) => ({ segmentKey: `s${e.s}`, action: actions[e.a] as string, q: e.a === 0 ? 1 : 0, n: e.n, sumInvP: e.n / p, sumInvP2: e.n / p / p, sumR: e.r, sumR2: e.r, sumRInvP: e.r / p, sumRInvP2: e.r / p / p, sumR2InvP2: e.r / p / p }));
      const rows = cells.reduce((s, c) => s + c.n, 0);
      const dr = doublyRobust(cells, target, actions);
      const i = ips(cells, rows);
      const sn = snips(cells);
      if (dr.ciLow <= truth && truth <= dr.ciHigh) covered.dr++;
      if (i.ciLow <= truth && truth <= i.ciHigh) covered.ips++;
      if (sn.ciLow <= truth && truth <= sn.ciHigh) covered.snips++;
    }
    const rate = { dr: covered.dr / replicates, ips: covered.ips / replicates, snips: covered.snips / replicates };
    table.push(`  2 rows per cell, ${replicates} replicates: 95% interval coverage DR ${rate.dr.toFixed(3)}, IPS ${rate.ips.toFixed(3)}, SNIPS ${rate.snips.toFixed(3)}`);
    expect(rate.dr).toBeGreaterThanOrEqual(0.92);
    expect(rate.dr).toBeLessThanOrEqual(0.98);
  });
});
