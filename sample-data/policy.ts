/**
 * The Maple Row logging policies (v7, v8) and the candidate policy v9. Each is an epsilon-greedy-smoothed
 * softmax over additive context scores: π(a|x) = (1 − ε)·softmax(β·s(x))_a + ε/K.
 * Logged policies are quantized to multiples of 1e-7 that sum to exactly 1, so a logged propensity is
 * exactly the probability with which its action was drawn.
 */
import {
  N_ACTIONS, N_BANDS, N_SEGMENTS, action, deviceIndex, regionIndex, segmentParts, tenureIndex,
} from './scenario.ts';

/** Scores per promotion, in PROMOTIONS order. */
type Scores = readonly number[];

export interface PolicyCoefficients {
  readonly version: string;
  /** Softmax inverse temperature β. */
  readonly scale: number;
  /** Uniform exploration share ε. */
  readonly epsilon: number;
  readonly base: Scores;
  readonly region: readonly Scores[];
  readonly device: readonly Scores[];
  readonly tenure: readonly Scores[];
  /** By HOUR_BANDS; null for a policy that ignores the hour. */
  readonly band: readonly Scores[] | null;
}

const REGION_SCORES: readonly Scores[] = [
  [0.2, 0, 0, -0.1, 0.1, 0, 0],
  [0, 0.2, 0, 0.1, -0.1, 0.1, 0],
  [-0.1, 0, 0.4, 0, 0, -0.1, 0],
  [0.3, -0.1, 0, 0, 0.2, 0, 0],
  [0, 0.1, -0.1, 0.3, 0, 0.1, 0],
  [0.1, 0, 0.1, -0.2, 0.2, 0, 0],
];
const DEVICE_SCORES: readonly Scores[] = [
  [0.1, 0, 0, 0, 0.2, -0.1, 0],
  [0, 0.1, 0, 0.2, 0, 0, 0],
  [-0.1, 0.2, 0, 0, -0.2, 0.2, 0.1],
];
const TENURE_SCORES: readonly Scores[] = [
  [0.2, -0.2, 0.1, 0.8, 0, -0.3, 0],
  [0, 0.2, 0, 0, 0.2, 0.1, 0],
  [0.3, 0.3, 0.1, -0.4, 0.3, 0.2, 0],
  [-0.1, 0, 0, 0.9, 0, 0, 0.2],
];
const BAND_SCORES: readonly Scores[] = [
  [0, 0.3, -0.3, 0, -0.2, 0.3, 0.3],
  [0, 0, 0.7, 0, -0.2, 0, 0],
  [0.1, 0.1, 0, 0, 0.1, 0, 0],
  [0.2, 0, -0.2, 0, 0.6, 0, 0],
  [0, 0.2, -0.3, 0, 0, 0.3, 0.2],
];

export const V7: PolicyCoefficients = {
  version: 'v7', scale: 1.0, epsilon: 0.12,
  base: [0.5, 0.4, 0.2, 0.6, 0.3, 0.1, -0.2],
  region: REGION_SCORES, device: DEVICE_SCORES, tenure: TENURE_SCORES, band: BAND_SCORES,
};

/** v8 pushes recipe kits, cuts free delivery, and is sharper and explores less. */
export const V8: PolicyCoefficients = {
  version: 'v8', scale: 1.4, epsilon: 0.08,
  base: [0.6, 0.3, 0.2, 0.1, 1.0, 0.1, -0.4],
  region: REGION_SCORES, device: DEVICE_SCORES, tenure: TENURE_SCORES, band: BAND_SCORES,
};

/** Candidate v9: segment-level (no hour), more recipe kits for established customers, household for new ones. */
export const V9: PolicyCoefficients = {
  version: 'v9', scale: 1.2, epsilon: 0.05,
  base: [0.6, 0.3, 0.3, 0.3, 0.9, 0.2, -0.5],
  region: REGION_SCORES,
  device: DEVICE_SCORES,
  tenure: [
    [0.2, -0.2, 0.1, 0.7, 0, 0.5, 0],
    [0, 0.2, 0, -0.2, 0.5, 0.1, 0],
    [0.3, 0.4, 0.1, -0.5, 0.6, 0.2, 0],
    [-0.1, 0, 0, 1.0, 0.2, 0, 0.1],
  ],
  band: null,
};

/** π(·|segment, band) in doubles (before quantization). */
export function policyProbabilities(c: PolicyCoefficients, segment: number, band: number): number[] {
  const { region, device, tenure } = segmentParts(segment);
  const scores = c.base.map((b, a) => c.scale * (b
    + (c.region[region]?.[a] ?? 0) + (c.device[device]?.[a] ?? 0) + (c.tenure[tenure]?.[a] ?? 0)
    + (c.band?.[band]?.[a] ?? 0)));
  const top = Math.max(...scores);
  const exps = scores.map((s) => Math.exp(s - top));
  const total = exps.reduce((x, y) => x + y, 0);
  return exps.map((e) => (1 - c.epsilon) * (e / total) + c.epsilon / N_ACTIONS);
}

/** Probabilities are whole multiples of 1/PROBABILITY_UNITS. */
export const PROBABILITY_UNITS = 10_000_000;

/** Largest-remainder rounding of shares (summing to 1) to integers summing exactly to `total`; ties go to the lower index. */
export function quantize(shares: readonly number[], total: number): number[] {
  const raw = shares.map((s) => s * total);
  const counts = raw.map(Math.floor);
  let missing = total - counts.reduce((x, y) => x + y, 0);
  const order = raw.map((r, i) => ({ i, frac: r - Math.floor(r) })).sort((x, y) => y.frac - x.frac || x.i - y.i);
  for (let k = 0; missing > 0; k = (k + 1) % order.length, missing--) counts[order[k]!.i]! += 1;
  return counts;
}

/** Defects of the demo log that live in the logging policy itself (sample-data/README.md). */
export interface PolicyDefects {
  /** In (region, device) the policy is greedy: this promotion with probability 1. */
  readonly greedy: { readonly region: number; readonly device: number; readonly action: number } | null;
  /** A second greedy (region, device), for the week after the demo log (exploration lapsed there too). */
  readonly alsoGreedy?: { readonly region: number; readonly device: number; readonly action: number } | null;
  /** Among this tenure the policy gives this promotion exactly `probability` and rescales the rest. */
  readonly floor: { readonly tenure: number; readonly action: number; readonly probability: number } | null;
}

export const NO_POLICY_DEFECTS: PolicyDefects = { greedy: null, floor: null };
export const DEMO_POLICY_DEFECTS: PolicyDefects = {
  greedy: { region: regionIndex('old-town'), device: deviceIndex('web'), action: action('free-delivery') },
  floor: { tenure: tenureIndex('new'), action: action('household'), probability: 0.002 },
};
/** The week after the demo log: the demo's policy defects persist, and exploration lapses in east-ridge on ios. */
export const NEXT_POLICY_DEFECTS: PolicyDefects = {
  ...DEMO_POLICY_DEFECTS,
  alsoGreedy: { region: regionIndex('east-ridge'), device: deviceIndex('ios'), action: action('produce-box') },
};

/** v8.1: v8's policy unchanged, released in the week after the demo log with a logging bug for one promotion. */
export const V8_1: PolicyCoefficients = { ...V8, version: 'v8.1' };

/**
 * A logging policy as served: for each (segment, hour band), integer counts per action out of
 * PROBABILITY_UNITS, their running sums (for drawing) and the logged propensity values.
 */
export class LoggingPolicy {
  readonly version: string;
  private readonly counts: Int32Array;
  private readonly cumulative: Int32Array;
  readonly propensity: Float64Array;
  readonly propensityText: string[];

  constructor(c: PolicyCoefficients, defects: PolicyDefects) {
    this.version = c.version;
    const cells = N_SEGMENTS * N_BANDS;
    this.counts = new Int32Array(cells * N_ACTIONS);
    this.cumulative = new Int32Array(cells * N_ACTIONS);
    this.propensity = new Float64Array(cells * N_ACTIONS);
    this.propensityText = new Array<string>(cells * N_ACTIONS).fill('');
    for (let segment = 0; segment < N_SEGMENTS; segment++) {
      for (let band = 0; band < N_BANDS; band++) {
        const cell = (segment * N_BANDS + band) * N_ACTIONS;
        const counts = servedCounts(c, defects, segment, band);
        let running = 0;
        counts.forEach((n, a) => {
          running += n;
          this.counts[cell + a] = n;
          this.cumulative[cell + a] = running;
          this.propensity[cell + a] = n / PROBABILITY_UNITS;
          this.propensityText[cell + a] = String(n / PROBABILITY_UNITS);
        });
      }
    }
  }

  /** Offset of (segment, band) in the per-action arrays. */
  cell(segment: number, band: number): number {
    return (segment * N_BANDS + band) * N_ACTIONS;
  }

  /** The action whose interval holds `unit`, an integer uniform on [0, PROBABILITY_UNITS). */
  draw(cell: number, unit: number): number {
    let a = 0;
    while (a < N_ACTIONS - 1 && unit >= this.cumulative[cell + a]!) a++;
    return a;
  }

  probability(cell: number, a: number): number {
    return this.counts[cell + a]! / PROBABILITY_UNITS;
  }
}

function servedCounts(c: PolicyCoefficients, defects: PolicyDefects, segment: number, band: number): number[] {
  const { region, device, tenure } = segmentParts(segment);
  const g = [defects.greedy, defects.alsoGreedy].find((x) => x && x.region === region && x.device === device);
  if (g) return Array.from({ length: N_ACTIONS }, (_, a) => (a === g.action ? PROBABILITY_UNITS : 0));
  const p = policyProbabilities(c, segment, band);
  const f = defects.floor;
  if (f && f.tenure === tenure) {
    const fixed = Math.round(f.probability * PROBABILITY_UNITS);
    const rest = p.filter((_, a) => a !== f.action);
    const restTotal = rest.reduce((x, y) => x + y, 0);
    const restCounts = quantize(rest.map((x) => x / restTotal), PROBABILITY_UNITS - fixed);
    restCounts.splice(f.action, 0, fixed);
    return restCounts;
  }
  return quantize(p, PROBABILITY_UNITS);
}

/** Rows of the v9 table: every segment × promotion; each segment's last probability is 1 − the sum of the others. */
export function targetPolicyRows(c: PolicyCoefficients): { segment: number; action: number; probability: number }[] {
  const rows: { segment: number; action: number; probability: number }[] = [];
  for (let segment = 0; segment < N_SEGMENTS; segment++) {
    const p = policyProbabilities(c, segment, 0);
    let sum = 0;
    for (let a = 0; a < N_ACTIONS - 1; a++) sum += p[a]!;
    p[N_ACTIONS - 1] = 1 - sum;
    p.forEach((probability, a) => rows.push({ segment, action: a, probability }));
  }
  return rows;
}
