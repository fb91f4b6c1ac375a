/**
 * Streams one Maple Row decision log as CSV text, row by row, and counts what it planted.
 *
 * Every decision consumes the same eleven PRNG outputs in the same order whatever the log kind, so the
 * demo and clean logs built from one seed share each decision's time, context and reward draws and
 * differ only where a defect was planted.
 */
import { DEMO_POLICY_DEFECTS, LoggingPolicy, NEXT_POLICY_DEFECTS, NO_POLICY_DEFECTS, PROBABILITY_UNITS, V7, V8, V8_1 } from './policy.ts';
import { Xoshiro128 } from './prng.ts';
import { BASKET_SIGMA, basketLogMedians, orderProbabilities, standardNormal } from './rewards.ts';
import {
  DAY_MS, DAYS, DEVICE_WEIGHTS, DEVICES, END_MS, HOUR_MS, HOURLY_TRAFFIC, N_ACTIONS, PROMOTIONS, REGION_WEIGHTS, REGIONS,
  START_MS, TENURE_WEIGHTS, TENURES, V8_FROM_MS, WEEKDAY_TRAFFIC, dayStartMs, deviceIndex, hourBand, regionIndex,
  segmentIndex, tenureIndex, action as actionIndex,
} from './scenario.ts';

/** `next` is the week after the demo log, for comparing audits over time (sample-data/README.md). */
export type LogKind = 'demo' | 'clean' | 'next';

export const LOG_COLUMNS: readonly { name: string; type: string }[] = [
  { name: 'decision_id', type: 'VARCHAR' },
  { name: 'logged_at', type: 'TIMESTAMP' },
  { name: 'region', type: 'VARCHAR' },
  { name: 'device', type: 'VARCHAR' },
  { name: 'tenure', type: 'VARCHAR' },
  { name: 'promotion', type: 'VARCHAR' },
  { name: 'propensity', type: 'DOUBLE' },
  { name: 'ordered', type: 'INTEGER' },
  { name: 'basket_value', type: 'DOUBLE' },
  { name: 'policy_version', type: 'VARCHAR' },
];

/** Where the demo log's non-policy defects sit (sample-data/README.md). */
export const DEMO_PLAN = {
  rangeDevice: deviceIndex('android'),
  rangeFromMs: dayStartMs(9),
  rangeToMs: dayStartMs(11),
  /** Among the affected rows, the share logged as NULL; the others are logged as 0. */
  rangeNullShare: 0.7,
  staleRegion: regionIndex('riverside'),
  driftTenure: tenureIndex('lapsed'),
  driftFromMs: dayStartMs(21),
  driftFactor: 0.5,
  duplicateShare: 0.003,
  missingRewardFromMs: END_MS - 36 * HOUR_MS,
} as const;

/** The week after the demo log: 2026-04-01 to 2026-04-08 (sample-data/README.md, "The week after"). */
export const NEXT_DAYS = 7;
export const NEXT_START_MS = END_MS;
export const NEXT_END_MS = NEXT_START_MS + NEXT_DAYS * DAY_MS;
export const NEXT_PLAN = {
  /** Day 4 of the week: v8.1 replaces v8. */
  v81FromMs: NEXT_START_MS + 3 * DAY_MS,
  /** v8.1 logs half the probability with which recipe-kit was drawn. */
  misloggedAction: actionIndex('recipe-kit'),
  misloggedFactor: 0.5,
  staleRegion: regionIndex('riverside'),
  driftTenure: tenureIndex('lapsed'),
  driftFactor: 0.5,
  duplicateShare: 0.003,
  // The feedback pipeline now lags 12 hours (36 in the demo log), so the missing share stays near the demo's.
  missingRewardFromMs: NEXT_END_MS - 12 * HOUR_MS,
  /** The week's decisions come from a different stream than the demo log's. */
  seedOffset: 0x9e3779b9,
} as const;

/** Late writes: a row reaches the log up to this long after its decision, so logged_at is only nearly sorted. */
const MAX_DELAY_MS = 60_000;
const CHUNK_ROWS = 16_384;

/** Counts over the rows as written (a duplicated row counts twice), for the manifest. */
export interface LogTally {
  rows: number;
  decisions: number;
  greedyRows: number;
  rangeRows: number;
  rangeNullRows: number;
  rangeZeroRows: number;
  staleRows: number;
  /** Σ 1{A=a}/p over the stale-propensity rows, by promotion. */
  staleInverseSums: number[];
  driftBefore: { rows: number; ordered: number };
  driftAfter: { rows: number; ordered: number };
  driftRows: number;
  duplicateRows: number;
  missingRewardRows: number;
  floorRows: number;
  /** The week after: rows in the second greedy segment, and the mis-logged v8.1 rows with Σ 1/p over them. */
  alsoGreedyRows: number;
  misloggedRows: number;
  misloggedInverseSum: number;
  versionRows: Record<string, number>;
}

function newTally(): LogTally {
  return {
    rows: 0, decisions: 0, greedyRows: 0, rangeRows: 0, rangeNullRows: 0, rangeZeroRows: 0, staleRows: 0,
    staleInverseSums: new Array<number>(N_ACTIONS).fill(0), driftBefore: { rows: 0, ordered: 0 },
    driftAfter: { rows: 0, ordered: 0 }, driftRows: 0, duplicateRows: 0, missingRewardRows: 0, floorRows: 0,
    alsoGreedyRows: 0, misloggedRows: 0, misloggedInverseSum: 0, versionRows: {},
  };
}

function cumulative(weights: readonly number[]): Float64Array {
  const total = weights.reduce((x, y) => x + y, 0);
  const out = new Float64Array(weights.length);
  let running = 0;
  weights.forEach((w, i) => { running += w / total; out[i] = running; });
  out[weights.length - 1] = 1;
  return out;
}

function pick(cdf: Float64Array, u: number): number {
  let i = 0;
  while (i < cdf.length - 1 && u >= cdf[i]!) i++;
  return i;
}

/**
 * Arrival times: decision j of n arrives at quantile (j + ½)/n of an hourly traffic profile (hour of
 * day × weekday × a seeded ±15% wobble per hour), so traffic has a daily and weekly shape.
 */
class ArrivalClock {
  private readonly edges: Float64Array;
  private bucket = 0;

  constructor(seed: number, private readonly startMs: number = START_MS, days: number = DAYS) {
    const wobble = new Xoshiro128((seed ^ 0x5bd1e995) >>> 0);
    const hours = days * 24;
    this.edges = new Float64Array(hours + 1);
    for (let h = 0; h < hours; h++) {
      const weekday = Math.floor(h / 24) % 7;
      const w = HOURLY_TRAFFIC[h % 24]! * WEEKDAY_TRAFFIC[weekday]! * (0.85 + 0.3 * wobble.uniform());
      this.edges[h + 1] = this.edges[h]! + w;
    }
  }

  /** Arrival time (ms) at traffic quantile q in [0, 1); q must not decrease between calls. */
  at(q: number): number {
    const target = q * this.edges[this.edges.length - 1]!;
    while (this.bucket < this.edges.length - 2 && target >= this.edges[this.bucket + 1]!) this.bucket++;
    const lo = this.edges[this.bucket]!;
    const frac = (target - lo) / (this.edges[this.bucket + 1]! - lo);
    return this.startMs + (this.bucket + frac) * HOUR_MS;
  }
}

const pad2 = (n: number): string => (n < 10 ? `0${n}` : String(n));

function timestampTexts(startMs: number, dayCount: number): { days: string[]; clock: string[] } {
  const days: string[] = [];
  for (let d = 0; d <= dayCount; d++) days.push(`${new Date(startMs + d * DAY_MS).toISOString().slice(0, 10)} `);
  const clock: string[] = [];
  for (let s = 0; s < 86_400; s++) clock.push(`${pad2(Math.floor(s / 3600))}:${pad2(Math.floor(s / 60) % 60)}:${pad2(s % 60)}`);
  return { days, clock };
}

export interface LogOptions {
  readonly kind: LogKind;
  /** Number of decisions; the demo log writes round(0.3%·decisions) retried rows on top. */
  readonly decisions: number;
  readonly seed: number;
  /** Receives CSV text in order; the generator waits for it (back-pressure). */
  readonly write: (text: string) => Promise<void>;
}

export async function writeLogCsv(options: LogOptions): Promise<LogTally> {
  const { kind, decisions: n, seed, write } = options;
  const demo = kind === 'demo';
  const next = kind === 'next';
  const defects = demo ? DEMO_POLICY_DEFECTS : next ? NEXT_POLICY_DEFECTS : NO_POLICY_DEFECTS;
  const policies = [new LoggingPolicy(V7, defects), new LoggingPolicy(V8, defects), ...(next ? [new LoggingPolicy(V8_1, defects)] : [])];
  const startMs = next ? NEXT_START_MS : START_MS;
  const days = next ? NEXT_DAYS : DAYS;
  const nextPlan = NEXT_PLAN;
  const alsoGreedy = NEXT_POLICY_DEFECTS.alsoGreedy!;
  const orderP = orderProbabilities();
  const basketMu = basketLogMedians();
  const regionCdf = cumulative(REGION_WEIGHTS);
  const deviceCdfs = DEVICE_WEIGHTS.map(cumulative);
  const tenureCdf = cumulative(TENURE_WEIGHTS);
  const streamSeed = next ? (seed ^ nextPlan.seedOffset) >>> 0 : seed;
  const rng = new Xoshiro128(streamSeed);
  const clock = new ArrivalClock(streamSeed, startMs, days);
  const texts = timestampTexts(startMs, days);
  const idWidth = Math.max(8, String(n).length);
  const greedy = DEMO_POLICY_DEFECTS.greedy!;
  const floor = DEMO_POLICY_DEFECTS.floor!;
  const plan = DEMO_PLAN;
  const duplicateTarget = demo || next ? Math.round((next ? nextPlan.duplicateShare : plan.duplicateShare) * n) : 0;
  let duplicatesChosen = 0;
  const tally = newTally();
  tally.decisions = n;

  let lines: string[] = [];
  await write(`${LOG_COLUMNS.map((c) => c.name).join(',')}\n`);

  for (let j = 0; j < n; j++) {
    const uDelay = rng.uniform();
    const uRegion = rng.uniform();
    const uDevice = rng.uniform();
    const uTenure = rng.uniform();
    const uAction = rng.uniform53();
    const uOrder = rng.uniform();
    const uZ1 = rng.uniform();
    const uZ2 = rng.uniform();
    const uNull = rng.uniform();
    const uDuplicate = rng.uniform();

    const arrival = clock.at((j + 0.5) / n);
    const delay = uDelay * uDelay * uDelay * MAX_DELAY_MS;
    const t = Math.max(startMs, Math.floor((arrival - delay) / 1000) * 1000);
    const sinceStart = t - startMs;
    const dayOffset = Math.floor(sinceStart / DAY_MS);
    const secondOfDay = (sinceStart - dayOffset * DAY_MS) / 1000;
    const band = hourBand(Math.floor(secondOfDay / 3600));

    const region = pick(regionCdf, uRegion);
    const device = pick(deviceCdfs[region]!, uDevice);
    const tenure = pick(tenureCdf, uTenure);
    const segment = segmentIndex(region, device, tenure);
    const version = next ? (t >= nextPlan.v81FromMs ? 2 : 1) : t >= V8_FROM_MS ? 1 : 0;
    const acting = policies[version]!;
    const cell = acting.cell(segment, band);
    const a = acting.draw(cell, Math.floor(uAction * PROBABILITY_UNITS));

    const stale = (demo || next) && version >= 1 && region === plan.staleRegion;
    const logging = stale ? policies[0]! : acting;
    let propensity: number | null = logging.propensity[cell + a]!;
    let propensityText = logging.propensityText[cell + a]!;
    const mislogged = next && version === 2 && !stale && a === nextPlan.misloggedAction;
    if (mislogged) {
      propensity = propensity * nextPlan.misloggedFactor;
      propensityText = String(propensity);
    }
    const inRange = demo && device === plan.rangeDevice && t >= plan.rangeFromMs && t < plan.rangeToMs;
    if (inRange) {
      propensity = uNull < plan.rangeNullShare ? null : 0;
      propensityText = propensity === null ? '' : '0';
    }

    const missing = (demo && t >= plan.missingRewardFromMs) || (next && t >= nextPlan.missingRewardFromMs);
    // In the week after, lapsed customers keep the halved order rate all week (the change happened in the demo log).
    const drifted = (demo && tenure === plan.driftTenure && t >= plan.driftFromMs) || (next && tenure === nextPlan.driftTenure);
    let ordered = 0;
    let orderedText = '';
    let basketText = '';
    if (!missing) {
      ordered = uOrder < orderP[cell + a]! * (drifted ? plan.driftFactor : 1) ? 1 : 0;
      orderedText = ordered ? '1' : '0';
      basketText = ordered
        ? String(Math.round(Math.exp(basketMu[tenure * N_ACTIONS + a]! + BASKET_SIGMA * standardNormal(1 - uZ1, uZ2)) * 100) / 100)
        : '0';
    }

    const duplicated = duplicateTarget > 0 && (n - j) * uDuplicate < duplicateTarget - duplicatesChosen;
    if (duplicated) duplicatesChosen++;

    const line = `d-${String(j + 1).padStart(idWidth, '0')},${texts.days[dayOffset]}${texts.clock[secondOfDay]},${REGIONS[region]},`
      + `${DEVICES[device]},${TENURES[tenure]},${PROMOTIONS[a]},${propensityText},${orderedText},${basketText},${acting.version}\n`;
    const copies = duplicated ? 2 : 1;
    for (let c = 0; c < copies; c++) lines.push(line);
    if (lines.length >= CHUNK_ROWS) {
      await write(lines.join(''));
      lines = [];
    }

    tally.rows += copies;
    if (duplicated) tally.duplicateRows++;
    if (!demo && !next) continue;
    if (region === greedy.region && device === greedy.device) tally.greedyRows += copies;
    if (next) {
      tally.versionRows[acting.version] = (tally.versionRows[acting.version] ?? 0) + copies;
      if (region === alsoGreedy.region && device === alsoGreedy.device) tally.alsoGreedyRows += copies;
      if (mislogged) {
        tally.misloggedRows += copies;
        tally.misloggedInverseSum += copies / propensity!;
      }
    }
    if (inRange) {
      tally.rangeRows += copies;
      if (propensity === null) tally.rangeNullRows += copies;
      else tally.rangeZeroRows += copies;
    }
    if (stale) {
      tally.staleRows += copies;
      tally.staleInverseSums[a]! += copies / propensity!;
    }
    if (tenure === plan.driftTenure && !missing) {
      const side = drifted ? tally.driftAfter : tally.driftBefore;
      side.rows += copies;
      side.ordered += copies * ordered;
      if (drifted) tally.driftRows += copies;
    }
    if (missing) tally.missingRewardRows += copies;
    if (tenure === floor.tenure && a === floor.action && propensity === floor.probability) tally.floorRows += copies;
  }
  if (lines.length > 0) await write(lines.join(''));
  return tally;
}
