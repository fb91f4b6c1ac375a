import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { EstimatorCell } from '../../app/core/cube/types.ts';
import { doublyRobust, ips, snips, type Estimate } from '../../app/core/stats/estimators.ts';
import { mulberry32Unit } from '../../sample-data/prng.ts';

// Ground truth from open data by the supervised-to-bandit conversion of Dudík, Langford & Li (2011), §5:
// each labelled example is a context, the ten digit classes are the actions, reward = 1 when the action
// is the label. Because every label is known, a target policy's value on these fixed contexts is exact,
// V = (1/N)·Σᵢ π(yᵢ | sᵢ), and each estimator's 95% interval should cover it about 95% of the time over
// re-drawn logs. Data: UCI Optical Recognition of Handwritten Digits test set (Alpaydin & Kaynak 1998),
// reduced to (label, segment); see test/reference/digits/PROVENANCE.md.

/** mulberry32 (Tommy Ettinger, public domain) in [0, 1), shared with the demo generator. */
const mulberry32 = mulberry32Unit;

interface Example {
  readonly label: number;
  readonly segment: number;
}

const CLASSES = 10;
const ACTIONS = Array.from({ length: CLASSES }, (_, a) => String(a));
// 5000 draws put the Monte Carlo SD of an observed coverage near 0.95 at about 0.003.
const DRAWS = 5000;

function loadFixture(): { examples: Example[]; segments: string[] } {
  const text = readFileSync(new URL('../reference/digits/digits-contexts.csv', import.meta.url), 'utf8');
  const [header, ...lines] = text.trim().split('\n');
  if (header !== 'id,label,ink,upper_ink,segment') throw new Error(`unexpected fixture header ${header}`);
  const segments: string[] = [];
  const examples = lines.map((line) => {
    const [, label, , , segment = ''] = line.split(',');
    if (!segments.includes(segment)) segments.push(segment);
    return { label: Number(label), segment: segments.indexOf(segment) };
  });
  return { examples, segments };
}

function softmax(scores: readonly number[]): number[] {
  const top = Math.max(...scores);
  const e = scores.map((s) => Math.exp(s - top));
  const total = e.reduce((a, b) => a + b, 0);
  return e.map((x) => x / total);
}

const { examples, segments } = loadFixture();

// Logging policy: per segment a softmax favouring a rotating block of classes, mixed with 20% uniform
// so that every propensity is at least 0.2/10 = 0.02.
const logging: number[][] = segments.map((_, k) =>
  softmax(ACTIONS.map((_, a) => 3 * (((a + 3 * k) % CLASSES) / (CLASSES - 1)))).map((p) => 0.8 * p + 0.2 / CLASSES),
);

// Target policy: per segment a softmax over the segment's label frequencies (a crude classifier that
// knows only the segment), so it differs from the logging policy and earns more than it.
const target: number[][] = segments.map((_, k) => {
  const inSegment = examples.filter((e) => e.segment === k);
  const freq = ACTIONS.map((_, a) => inSegment.filter((e) => e.label === a).length / inSegment.length);
  return softmax(freq.map((f) => 12 * f));
});

const prob = (table: number[][], segment: number, action: number): number => table[segment]?.[action] ?? Number.NaN;
const segmentIndex = new Map(segments.map((s, k) => [s, k]));
const targetProbability = (segmentKey: string, action: string): number =>
  prob(target, segmentIndex.get(segmentKey) ?? -1, Number(action));

const trueValue = examples.reduce((acc, e) => acc + prob(target, e.segment, e.label), 0) / examples.length;
const loggingValue = examples.reduce((acc, e) => acc + prob(logging, e.segment, e.label), 0) / examples.length;

/** One log: one action per example from the logging policy, aggregated into (segment, action) cells. */
function drawCells(seed: number): EstimatorCell[] {
  const random = mulberry32(seed);
  type Sums = { n: number; sumR: number };
  const sums: Sums[] = Array.from({ length: segments.length * CLASSES }, () => ({ n: 0, sumR: 0 }));
  for (const e of examples) {
    const u = random();
    const row = logging[e.segment] ?? [];
    let action = 0;
    for (let acc = row[0] ?? 0; u >= acc && action < CLASSES - 1; acc += row[++action] ?? 0);
    const cell = sums[e.segment * CLASSES + action] as Sums;
    cell.n += 1;
    cell.sumR += action === e.label ? 1 : 0;
  }
  // Propensities are constant within a cell, so each sum is a count times a power of 1/p (r² = r for 0/1).
  return sums.flatMap(({ n, sumR }, index) => {
    if (n === 0) return [];
    const k = Math.floor(index / CLASSES);
    const a = index % CLASSES;
    const inv = 1 / prob(logging, k, a);
    return [{
      segmentKey: segments[k] ?? '', action: String(a), q: prob(target, k, a), n,
      sumInvP: n * inv, sumInvP2: n * inv * inv, sumR, sumR2: sumR,
      sumRInvP: sumR * inv, sumRInvP2: sumR * inv * inv, sumR2InvP2: sumR * inv * inv,
    }];
  });
}

const covers = (e: Estimate): boolean => e.ciLow <= trueValue && trueValue <= e.ciHigh;

const ESTIMATORS: readonly { name: string; run: (cells: EstimatorCell[]) => Estimate }[] = [
  { name: 'IPS', run: (cells) => ips(cells, examples.length) },
  { name: 'SNIPS', run: (cells) => snips(cells) },
  { name: 'DR', run: (cells) => doublyRobust(cells, targetProbability, ACTIONS) },
];

describe('ground truth on UCI optdigits (supervised-to-bandit conversion)', () => {
  it('the fixture is the 1797-example UCI test set with 6 segments and the published class counts', () => {
    expect(examples.length).toBe(1797);
    expect(segments.length).toBe(6);
    // Class counts 0..4 of optdigits.tes as printed on the UCI dataset page: 178, 182, 177, 183, 181.
    const counts = ACTIONS.map((_, a) => examples.filter((e) => e.label === a).length);
    expect(counts.slice(0, 5)).toEqual([178, 182, 177, 183, 181]);
  });

  it('policies are valid distributions, logging propensities ≥ 0.02, and the target differs from logging', () => {
    for (const table of [logging, target]) {
      for (const row of table) expect(row.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
    }
    expect(Math.min(...logging.flat())).toBeGreaterThanOrEqual(0.02);
    expect(trueValue - loggingValue).toBeGreaterThan(0.05);
  });

  it.each(ESTIMATORS)('$name 95% interval covers the true value on one drawn log', ({ run }) => {
    expect(covers(run(drawCells(1)))).toBe(true);
  });

  // Measured (5000 draws): RMS SE / SD = 1.013 (IPS), 1.014 (SNIPS), 1.007 (DR, leave-one-out cell means);
  // coverage 0.945, 0.949, 0.944. With 5000 draws the Monte Carlo SD of a coverage near 0.95 is about 0.003,
  // and of SE / SD about 1%, so the bounds below sit 4 to 5 Monte Carlo SDs from the nominal values.
  it(`over ${DRAWS} re-drawn logs each estimator is unbiased, its SE matches its spread within ±5%, coverage lies in [0.935, 0.965]`, () => {
    const results = ESTIMATORS.map(() => [] as Estimate[]);
    for (let draw = 0; draw < DRAWS; draw += 1) {
      const cells = drawCells(1000 + draw);
      ESTIMATORS.forEach(({ run }, j) => results[j]?.push(run(cells)));
    }
    const summaries = results.map((estimates) => {
      const mean = estimates.reduce((a, e) => a + e.value, 0) / DRAWS;
      const sd = Math.sqrt(estimates.reduce((a, e) => a + (e.value - mean) ** 2, 0) / (DRAWS - 1));
      const rmsSe = Math.sqrt(estimates.reduce((a, e) => a + e.se ** 2, 0) / DRAWS);
      const coverage = estimates.filter(covers).length / DRAWS;
      return { mean, sd, rmsSe, coverage };
    });
    console.log(
      `optdigits N=${examples.length}, true V=${trueValue.toFixed(4)}, logging V=${loggingValue.toFixed(4)}, ${DRAWS} logs; ` +
        ESTIMATORS.map(({ name }, j) => {
          const s = summaries[j];
          return s === undefined ? name : `${name} coverage ${s.coverage.toFixed(4)} mean ${s.mean.toFixed(4)} ` +
            `sd ${s.sd.toFixed(4)} rms SE ${s.rmsSe.toFixed(4)}`;
        }).join('; '),
    );
    for (const { mean, sd, rmsSe, coverage } of summaries) {
      expect(Math.abs(mean - trueValue)).toBeLessThan((4 * sd) / Math.sqrt(DRAWS));
      expect(rmsSe / sd).toBeGreaterThan(0.95);
      expect(rmsSe / sd).toBeLessThan(1.05);
      expect(coverage).toBeGreaterThanOrEqual(0.935);
      expect(coverage).toBeLessThanOrEqual(0.965);
    }
  });
});
