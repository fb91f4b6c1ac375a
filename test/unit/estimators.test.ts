import { describe, expect, it } from 'vitest';
import type { EstimatorCell } from '../../app/core/cube/types.ts';
import {
  doublyRobust,
  ips,
  minimumDetectableDifference,
  onPolicyValue,
  snips,
  type Estimate,
  type TargetProbability,
} from '../../app/core/stats/estimators.ts';
import { mulberry32Unit } from '../../sample-data/prng.ts';

// Reference values: (a) a direct row-level computation of each published formula on seeded synthetic
// rows (an algebra check of the cube-sum expansions); (b) scipy 1.17 on this machine for the normal
// quantiles and for scipy.stats.sem. No textbook worked example is used for IPS, SNIPS or DR.

/** mulberry32 (Tommy Ettinger, public domain) in [0, 1), shared with the demo generator. */
const mulberry32 = mulberry32Unit;

interface Row {
  readonly segment: string;
  readonly action: string;
  readonly p: number;
  readonly r: number;
}

const SEGMENTS = ['north-harbor', 'old-town', 'riverside'];
const ACTIONS = ['produce-box', 'bakery', 'free-delivery', 'no-banner'];

/** A target table over ACTIONS for each segment, rows summing to 1. */
function randomTarget(random: () => number, zeroShare: number): Map<string, Map<string, number>> {
  const table = new Map<string, Map<string, number>>();
  for (const segment of SEGMENTS) {
    const raw = ACTIONS.map((_, i) => (i > 0 && random() < zeroShare ? 0 : 0.05 + random()));
    const total = raw.reduce((a, b) => a + b, 0);
    table.set(segment, new Map(ACTIONS.map((a, i) => [a, (raw[i] ?? 0) / total])));
  }
  return table;
}

const lookup = (table: Map<string, Map<string, number>>): TargetProbability => (segment, action) =>
  table.get(segment)?.get(action) ?? 0;

type MutableCell = { -readonly [K in keyof EstimatorCell]: EstimatorCell[K] };

function cellsOf(rows: readonly Row[], target: TargetProbability, split = 1): EstimatorCell[] {
  const cells = new Map<string, MutableCell>();
  rows.forEach((row, index) => {
    const key = `${row.segment}|${row.action}|${index % split}`;
    let c = cells.get(key);
    if (c === undefined) {
      c = {
        segmentKey: row.segment, action: row.action, q: target(row.segment, row.action),
        n: 0, sumInvP: 0, sumInvP2: 0, sumR: 0, sumR2: 0, sumRInvP: 0, sumRInvP2: 0, sumR2InvP2: 0,
      };
      cells.set(key, c);
    }
    const inv = 1 / row.p;
    c.n += 1;
    c.sumInvP += inv;
    c.sumInvP2 += inv * inv;
    c.sumR += row.r;
    c.sumR2 += row.r * row.r;
    c.sumRInvP += row.r * inv;
    c.sumRInvP2 += row.r * inv * inv;
    c.sumR2InvP2 += row.r * row.r * inv * inv;
  });
  return [...cells.values()];
}

/** Mean and sample-sd/√n of explicit values, two-pass. */
function meanAndSe(values: readonly number[]): { mean: number; se: number } {
  const n = values.length;
  const mean = values.reduce((a, b) => a + b, 0) / n;
  const ss = values.reduce((a, x) => a + (x - mean) ** 2, 0);
  return { mean, se: Math.sqrt(ss / (n - 1) / n) };
}

function rowIps(rows: readonly Row[], target: TargetProbability): { mean: number; se: number } {
  return meanAndSe(rows.map((x) => (target(x.segment, x.action) / x.p) * x.r));
}

function rowSnips(rows: readonly Row[], target: TargetProbability): { mean: number; se: number } {
  const w = rows.map((x) => target(x.segment, x.action) / x.p);
  const sumW = w.reduce((a, b) => a + b, 0);
  const value = rows.reduce((a, x, i) => a + (w[i] ?? 0) * x.r, 0) / sumW;
  const n = rows.length;
  // (1/n)·mean(w²(r − V)²)/mean(w)², written with means as in Hesterberg (1995).
  const meanW2Res = rows.reduce((a, x, i) => a + (w[i] ?? 0) ** 2 * (x.r - value) ** 2, 0) / n;
  return { mean: value, se: Math.sqrt(meanW2Res / (sumW / n) ** 2 / n) };
}

function rowDr(rows: readonly Row[], target: TargetProbability): { mean: number; se: number } {
  // leave-one-out: each row's model is fitted on the other rows of its (segment, action); a pair with
  // fewer than 2 rows uses the action's mean over the other segments (else every other row's mean)
  const mean = (subset: readonly Row[]): number | undefined =>
    subset.length === 0 ? undefined : subset.reduce((a, x) => a + x.r, 0) / subset.length;
  const pair = (s: string, a: string) => rows.filter((x) => x.segment === s && x.action === a);
  const rHat = (s: string, a: string, without?: Row): number => {
    const own = pair(s, a);
    if (own.length >= 2) return mean(own.filter((x) => x !== without)) as number;
    if (own.length === 1) return mean(rows.filter((x) => x.action === a && x.segment !== s)) ?? (mean(rows.filter((x) => !own.includes(x))) as number);
    return mean(rows.filter((x) => x.action === a)) ?? (mean(rows) as number);
  };
  const direct = (s: string, without: Row): number => ACTIONS.reduce((acc, a) => acc + target(s, a) * rHat(s, a, without), 0);
  return meanAndSe(
    rows.map((x) => direct(x.segment, x) + (target(x.segment, x.action) / x.p) * (x.r - rHat(x.segment, x.action, x))),
  );
}

interface Scenario {
  readonly name: string;
  readonly seed: number;
  readonly n: number;
  readonly reward: (random: () => number, segment: number, action: number) => number;
  /** Actions the log never takes in a segment: [segment index, action index]. */
  readonly unlogged: readonly (readonly [number, number])[];
  readonly zeroShare: number;
}

const SCENARIOS: readonly Scenario[] = [
  {
    name: 'binary reward, every pair logged', seed: 11, n: 400, zeroShare: 0, unlogged: [],
    reward: (random, s, a) => (random() < 0.1 + 0.15 * s + 0.1 * a ? 1 : 0),
  },
  {
    name: 'continuous reward with negatives, target zero on some actions', seed: 23, n: 250, zeroShare: 0.4, unlogged: [],
    reward: (random, s, a) => 20 * random() - 5 + 3 * s - 2 * a,
  },
  {
    name: 'a pair and a whole action never logged (model fallbacks)', seed: 37, n: 300, zeroShare: 0,
    unlogged: [[0, 1], [1, 3], [0, 3], [2, 3]],
    reward: (random, s, a) => (random() < 0.3 + 0.1 * a - 0.05 * s ? 1 : 0),
  },
];

function drawRows(scenario: Scenario, random: () => number): Row[] {
  const rows: Row[] = [];
  while (rows.length < scenario.n) {
    const s = Math.floor(random() * SEGMENTS.length);
    const a = Math.floor(random() * ACTIONS.length);
    if (scenario.unlogged.some(([us, ua]) => us === s && ua === a)) continue;
    rows.push({ segment: SEGMENTS[s] ?? '', action: ACTIONS[a] ?? '', p: 0.03 + 0.97 * random(), r: scenario.reward(random, s, a) });
  }
  return rows;
}

/**
 * DR from cube sums equals the row-level leave-one-out DR exactly for a 0/1 reward; for other rewards the
 * cube lacks Σr²/p and bounds it (Σδ²/p ≥ Σδ²), so the SE may only be wider, and by little.
 */
function expectDr(actual: Estimate, expected: { mean: number; se: number }, binary: boolean): void {
  if (binary) return expectClose(actual, expected);
  expect(Math.abs(actual.value - expected.mean)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(expected.mean)));
  expect(actual.se).toBeGreaterThanOrEqual(expected.se * (1 - 1e-12));
  expect(actual.se).toBeLessThanOrEqual(expected.se * 1.05);
}

function expectClose(actual: Estimate, expected: { mean: number; se: number }, rel = 1e-12): void {
  expect(Math.abs(actual.value - expected.mean)).toBeLessThanOrEqual(rel * Math.abs(expected.mean));
  expect(Math.abs(actual.se - expected.se)).toBeLessThanOrEqual(rel * expected.se);
}

describe('estimators from cube sums equal the row-level formulas', () => {
  for (const scenario of SCENARIOS) {
    describe(scenario.name, () => {
      const random = mulberry32(scenario.seed);
      const table = randomTarget(random, scenario.zeroShare);
      const target = lookup(table);
      const rows = drawRows(scenario, random);
      const cells = cellsOf(rows, target);
      const binary = rows.every((x) => x.r === 0 || x.r === 1);

      it('IPS value and SE (Horvitz & Thompson 1952)', () => {
        expectClose(ips(cells, rows.length), rowIps(rows, target));
      });
      it('IPS with q = 0 cells left out, counting them in nTotal', () => {
        expectClose(ips(cells.filter((c) => c.q > 0), rows.length), rowIps(rows, target));
      });
      it('SNIPS value and delta-method SE (Swaminathan & Joachims 2015)', () => {
        expectClose(snips(cells), rowSnips(rows, target));
      });
      it('DR value and SE with the leave-one-out segment × action mean model (Dudík, Langford & Li 2011)', () => {
        expectDr(doublyRobust(cells, target, ACTIONS), rowDr(rows, target), binary);
      });
      it('cells split across time buckets merge to the same estimates', () => {
        const split = cellsOf(rows, target, 3);
        expect(split.length).toBeGreaterThan(cells.length);
        expectClose(ips(split, rows.length), rowIps(rows, target));
        expectClose(snips(split), rowSnips(rows, target));
        expectDr(doublyRobust(split, target, ACTIONS), rowDr(rows, target), binary);
      });
    });
  }

  it('DR moves by exactly c when every reward moves by c, unlogged pairs included (a zero fallback would not)', () => {
    const scenario = SCENARIOS[2] as Scenario;
    const random = mulberry32(scenario.seed);
    const target = lookup(randomTarget(random, 0));
    const rows = drawRows(scenario, random);
    const base = doublyRobust(cellsOf(rows, target), target, ACTIONS).value;
    // Raising every reward by 1 shifts every r̂, fallbacks included, so DR moves by exactly 1.
    const shifted = doublyRobust(cellsOf(rows.map((x) => ({ ...x, r: x.r + 1 })), target), target, ACTIONS).value;
    expect(shifted - base).toBeCloseTo(1, 12);
  });
});

describe('identities of the estimators', () => {
  const random = mulberry32(5);
  const logging = lookup(randomTarget(random, 0));
  // Propensities constant within each (segment, action), as when the logging policy is per segment.
  const rows: Row[] = Array.from({ length: 500 }, () => {
    const segment = SEGMENTS[Math.floor(random() * SEGMENTS.length)] ?? '';
    const action = ACTIONS[Math.floor(random() * ACTIONS.length)] ?? '';
    return { segment, action, p: logging(segment, action), r: random() < 0.4 ? 1 : 0 };
  });

  it('IPS of the logging policy itself (w = 1) equals the on-policy mean and its SE', () => {
    const cells = cellsOf(rows, logging);
    const onPolicy = onPolicyValue(rows.length, rows.reduce((a, x) => a + x.r, 0), rows.reduce((a, x) => a + x.r * x.r, 0));
    const viaIps = ips(cells, rows.length);
    expect(viaIps.value).toBeCloseTo(onPolicy.value, 12);
    expect(viaIps.se).toBeCloseTo(onPolicy.se, 12);
  });

  it('DR equals the direct method when propensities are constant within each cell', () => {
    const target = lookup(randomTarget(random, 0));
    const cells = cellsOf(rows, target);
    // Σw(r − r̂) = (q/p)(Σr − n·r̂) = 0 per cell when r̂ is the cell mean (Dudík, Langford & Li 2011, §2).
    const direct = cells.reduce((acc, c) => {
      const segmentCells = cells.filter((d) => d.segmentKey === c.segmentKey);
      const d = segmentCells.reduce((a, e) => a + target(e.segmentKey, e.action) * (e.sumR / e.n), 0);
      return acc + c.n * d;
    }, 0) / rows.length;
    expect(doublyRobust(cells, target, ACTIONS).value).toBeCloseTo(direct, 12);
  });
});

describe('values checked against scipy 1.17 (run on this machine)', () => {
  it('the 95% interval uses z = scipy.stats.norm.ppf(0.975) = 1.959963984540054', () => {
    const e = onPolicyValue(10, 4, 4);
    expect((e.ciHigh - e.value) / e.se).toBeCloseTo(1.959963984540054, 14);
    expect((e.value - e.ciLow) / e.se).toBeCloseTo(1.959963984540054, 14);
  });

  it('on-policy mean and SE match numpy mean and scipy.stats.sem', () => {
    const r = [3.5, 0, 12.25, 7, 0, 4.75, 9.5, 1.25];
    const e = onPolicyValue(r.length, r.reduce((a, b) => a + b, 0), r.reduce((a, b) => a + b * b, 0));
    expect(e.value).toBeCloseTo(4.78125, 14); // numpy.mean
    expect(e.se).toBeCloseTo(1.5968981512160199, 13); // scipy.stats.sem (ddof=1)
  });

  it('IPS of six explicit rows matches numpy mean and scipy.stats.sem of q/p·r', () => {
    const p = [0.5, 0.25, 0.1, 0.8, 0.5, 0.2];
    const q = [0.3, 0.6, 0.2, 0.5, 0.3, 0.9];
    const r = [1, 0, 1, 1, 0, 1];
    const cells: EstimatorCell[] = p.map((pi, i) => {
      const ri = r[i] ?? 0;
      return {
        segmentKey: 'old-town', action: ACTIONS[i % 4] + String(i), q: q[i] ?? 0, n: 1,
        sumInvP: 1 / pi, sumInvP2: 1 / pi ** 2, sumR: ri, sumR2: ri * ri,
        sumRInvP: ri / pi, sumRInvP2: ri / pi ** 2, sumR2InvP2: (ri * ri) / pi ** 2,
      };
    });
    const e = ips(cells, 6);
    expect(e.value).toBeCloseTo(1.2874999999999999, 14);
    expect(e.se).toBeCloseTo(0.708394605193085, 13);
  });

  it('minimum detectable difference is 2.8·SE, within 0.002 of z₀.₉₇₅ + z₀.₈ from scipy', () => {
    // scipy.stats.norm.ppf(0.975) + scipy.stats.norm.ppf(0.8) = 2.8015852181129683
    expect(minimumDetectableDifference(0.5)).toBeCloseTo(1.4, 14);
    expect(Math.abs(minimumDetectableDifference(1) - 2.8015852181129683)).toBeLessThan(0.002);
  });
});

describe('bad input gets a specific error', () => {
  const good: EstimatorCell = {
    segmentKey: 'riverside', action: 'bakery', q: 0.5, n: 3,
    sumInvP: 6, sumInvP2: 12, sumR: 2, sumR2: 2, sumRInvP: 4, sumRInvP2: 8, sumR2InvP2: 8,
  };
  const half: TargetProbability = (_s, a) => (a === 'bakery' || a === 'household' ? 0.5 : 0);
  const cases: readonly { name: string; run: () => unknown; message: RegExp }[] = [
    { name: 'q above 1', run: () => ips([{ ...good, q: 1.2 }], 3), message: /q must be a probability/ },
    { name: 'q NaN', run: () => snips([{ ...good, q: Number.NaN }]), message: /q must be a probability/ },
    { name: 'negative n', run: () => ips([{ ...good, n: -1 }], 3), message: /n must be a non-negative integer/ },
    { name: 'non-finite sum', run: () => snips([{ ...good, sumRInvP: Number.POSITIVE_INFINITY }]), message: /finite/ },
    { name: 'ΣinvP below n', run: () => ips([{ ...good, sumInvP: 2 }], 3), message: /inconsistent with propensities/ },
    { name: 'nTotal below the cells', run: () => ips([good], 2), message: /nTotal \(2\) is smaller/ },
    { name: 'fractional nTotal', run: () => ips([good], 3.5), message: /nTotal must be an integer/ },
    { name: 'too few rows', run: () => ips([{ ...good, n: 1, sumInvP: 2 }], 1), message: /at least 2 rewarded rows/ },
    { name: 'SNIPS with Σw = 0', run: () => snips([{ ...good, q: 0 }]), message: /Σw = 0/ },
    { name: 'DR with an empty action set', run: () => doublyRobust([good], half, []), message: /action set is empty/ },
    { name: 'DR with duplicate actions', run: () => doublyRobust([good], half, ['bakery', 'bakery']), message: /duplicates/ },
    { name: 'DR with an action outside the set', run: () => doublyRobust([good], half, ['household']), message: /not in the action set/ },
    { name: 'DR with q different from the target', run: () => doublyRobust([{ ...good, q: 0.4 }], half, ['bakery', 'household']), message: /target gives 0.5/ },
    { name: 'DR with a target not summing to 1', run: () => doublyRobust([good], half, ['bakery', 'no-banner']), message: /sum to 0.5/ },
    { name: 'on-policy with n < 2', run: () => onPolicyValue(1, 1, 1), message: /at least 2/ },
    { name: 'on-policy with NaN sum', run: () => onPolicyValue(5, Number.NaN, 1), message: /finite/ },
    { name: 'MDD with negative SE', run: () => minimumDetectableDifference(-1), message: /se must be finite/ },
  ];
  it.each(cases)('$name', ({ run, message }) => {
    expect(run).toThrow(message);
  });
  it('a valid cell passes the same checks', () => {
    expect(doublyRobust([good], half, ['bakery', 'household']).value).toBeCloseTo(2 / 3, 12);
  });
});
