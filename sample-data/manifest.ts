/** The manifest written beside each sample log: how it was made and every defect planted in it. */
import type { LogKind, LogTally } from './log.ts';
import { DEMO_PLAN, LOG_COLUMNS, NEXT_DAYS, NEXT_END_MS, NEXT_PLAN, NEXT_START_MS } from './log.ts';
import { DEMO_POLICY_DEFECTS, NEXT_POLICY_DEFECTS, PROBABILITY_UNITS, V7, V8, V8_1 } from './policy.ts';
import { DAYS, DEVICES, END_MS, PROMOTIONS, REGIONS, START_MS, TENURES, V8_FROM_MS } from './scenario.ts';

export interface PlantedDefect {
  /** The check (README.md, "What the audit checks") that should detect it. */
  kind: string;
  /** Other checks expected to notice it too. */
  also_detected_by: string[];
  segment: Record<string, string>;
  action?: string;
  window?: { from: string; to: string };
  magnitude: Record<string, number | Record<string, number>>;
  rows_affected: number;
  description: string;
}

export interface SampleManifest {
  schema: 'counterweight.sample-manifest/1';
  scenario: 'Maple Row Market';
  log: LogKind;
  generator: { seed: number; decisions: number; rows: number; prng: string; probability_units: number };
  columns: { name: string; type: string }[];
  time: { start: string; end: string; days: number; day_numbering: string };
  policy_versions: { version: string; from: string; to: string; softmax_scale: number; epsilon: number }[];
  policy_switch_at: string;
  defects: PlantedDefect[];
  /** The week after only: what changed since the demo log, as an audit comparison should report it. */
  changes_since?: ChangesSince;
}

/** Where a comparison with the baseline should see one planted change (or a direct consequence of one). */
export interface PlantedChange {
  /** A check-level change of one of these checks is this change. */
  checks: string[];
  /** A finding or segment change is this change when its check is listed here, its segment contains these values and its action (if given) is this one. */
  where: { checks: string[]; segment: Record<string, string>; action?: string }[];
  description: string;
}

export interface ChangesSince {
  baseline_log: string;
  /** Each must be reported as a regression; every regression must be one of these. */
  worse: PlantedChange[];
  /** Each must be reported as resolved or better. */
  better: PlantedChange[];
}

const iso = (ms: number): string => new Date(ms).toISOString();
/** Six significant digits keeps the manifest readable; the tests compare against the data with tolerances. */
const round6 = (x: number): number => Number(x.toPrecision(6));

/** What every manifest opens with, in this key order: the scenario, the generator, the columns, the time span. */
function manifestHead(log: LogKind, seed: number, tally: LogTally, prng: string, startMs: number, endMs: number, days: number) {
  return {
    schema: 'counterweight.sample-manifest/1',
    scenario: 'Maple Row Market',
    log,
    generator: { seed, decisions: tally.decisions, rows: tally.rows, prng, probability_units: PROBABILITY_UNITS },
    columns: LOG_COLUMNS.map((c) => ({ ...c })),
    time: {
      start: iso(startMs), end: iso(endMs), days,
      day_numbering: 'day d (1-based) covers [start + (d-1)*24h, start + d*24h); windows are half-open [from, to)',
    },
  } as const;
}

export function buildManifest(kind: LogKind, seed: number, tally: LogTally): SampleManifest {
  if (kind === 'next') return nextManifest(seed, tally);
  return {
    ...manifestHead(kind, seed, tally, 'xoshiro128** 1.1 seeded through mulberry32', START_MS, END_MS, DAYS),
    policy_versions: [
      { version: V7.version, from: iso(START_MS), to: iso(V8_FROM_MS), softmax_scale: V7.scale, epsilon: V7.epsilon },
      { version: V8.version, from: iso(V8_FROM_MS), to: iso(END_MS), softmax_scale: V8.scale, epsilon: V8.epsilon },
    ],
    policy_switch_at: iso(V8_FROM_MS),
    defects: kind === 'demo' ? demoDefects(tally) : [],
  };
}

function demoDefects(t: LogTally): PlantedDefect[] {
  const share = (rows: number): number => round6(rows / t.rows);
  const greedy = DEMO_POLICY_DEFECTS.greedy!;
  const floor = DEMO_POLICY_DEFECTS.floor!;
  const p = DEMO_PLAN;
  const rateBefore = t.driftBefore.ordered / t.driftBefore.rows;
  const rateAfter = t.driftAfter.ordered / t.driftAfter.rows;
  const balance = Object.fromEntries(PROMOTIONS.map((name, a) => [name, round6(t.staleInverseSums[a]! / t.staleRows)]));
  return [
    {
      kind: 'propensity.exploration', also_detected_by: ['support.target'],
      segment: { region: REGIONS[greedy.region]!, device: DEVICES[greedy.device]! },
      action: PROMOTIONS[greedy.action]!,
      magnitude: { propensity: 1, share_of_rows: share(t.greedyRows) },
      rows_affected: t.greedyRows,
      description: 'The policy is greedy in old-town on web for the whole log (both versions, every tenure and hour): '
        + 'it always shows free-delivery and logs propensity 1, so no other promotion is ever observed there.',
    },
    {
      kind: 'propensity.range', also_detected_by: [],
      segment: { device: DEVICES[p.rangeDevice]! },
      window: { from: iso(p.rangeFromMs), to: iso(p.rangeToMs) },
      magnitude: {
        null_rows: t.rangeNullRows, zero_rows: t.rangeZeroRows, null_share_within: round6(t.rangeNullRows / t.rangeRows),
        share_of_rows: share(t.rangeRows),
      },
      rows_affected: t.rangeRows,
      description: 'On days 9-10 every android row lost its propensity: about 70% are logged NULL and the rest 0. '
        + 'Actions and rewards on those rows were drawn normally.',
    },
    {
      kind: 'balance.weights', also_detected_by: ['drift.policy'],
      segment: { region: REGIONS[p.staleRegion]! },
      window: { from: iso(V8_FROM_MS), to: iso(END_MS) },
      magnitude: { share_of_rows: share(t.staleRows), balance_by_action: balance },
      rows_affected: t.staleRows,
      description: 'In riverside after the v8 rollout, actions are drawn from v8 and policy_version says v8, but the logged '
        + 'propensity is v7\'s probability of the drawn action (same segment and hour). balance_by_action is '
        + '(1/n) * sum 1{A=a}/p over these rows; it would be 1 for every promotion if the propensities were right.',
    },
    {
      kind: 'drift.reward', also_detected_by: [],
      segment: { tenure: TENURES[p.driftTenure]! },
      window: { from: iso(p.driftFromMs), to: iso(END_MS) },
      magnitude: { factor: p.driftFactor, ordered_rate_before: round6(rateBefore), ordered_rate_after: round6(rateAfter) },
      rows_affected: t.driftRows,
      description: 'From day 21, P(ordered) is halved for lapsed customers under every promotion (the policy is unchanged). '
        + 'Rates are over rows with an observed reward; rows_affected counts lapsed rows from day 21 whose reward is not missing.',
    },
    {
      kind: 'identity.duplicates', also_detected_by: [],
      segment: {},
      magnitude: {
        duplicated_ids: t.duplicateRows, extra_rows: t.duplicateRows,
        share_of_ids: round6(t.duplicateRows / t.decisions), share_of_rows: share(t.duplicateRows),
      },
      rows_affected: t.duplicateRows,
      description: 'Retried writes: round(0.3% of decisions) decisions, chosen uniformly, were written twice. The second row '
        + 'is an exact copy of the first (same decision_id, logged_at and every other column) and follows it directly in '
        + 'file order. rows_affected counts the extra copies.',
    },
    {
      kind: 'reward.validity', also_detected_by: ['drift.reward'],
      segment: {},
      window: { from: iso(p.missingRewardFromMs), to: iso(END_MS) },
      magnitude: { hours: 36, share_of_rows: share(t.missingRewardRows) },
      rows_affected: t.missingRewardRows,
      description: 'Feedback for the last 36 hours has not arrived: ordered and basket_value are NULL on every row from '
        + 'the window start.',
    },
    {
      kind: 'support.floor', also_detected_by: ['weights.tail'],
      segment: { tenure: TENURES[floor.tenure]! },
      action: PROMOTIONS[floor.action]!,
      magnitude: { propensity: floor.probability, floor: 0.01, share_of_rows: share(t.floorRows), share_of_cell_under_floor: 1 },
      rows_affected: t.floorRows,
      description: 'Both policy versions give household exactly 0.002 among new customers (the other promotions share the '
        + 'remaining 0.998 in softmax proportion) and log it correctly; old-town on web is excluded because the policy is '
        + 'greedy there. rows_affected counts logged rows with tenure=new, promotion=household and propensity 0.002 '
        + '(rows of android on days 9-10 carry NULL/0 instead).',
    },
  ];
}

/** The week after the demo log (sample-data/README.md, "The week after"). */
function nextManifest(seed: number, t: LogTally): SampleManifest {
  const share = (rows: number): number => round6(rows / t.rows);
  const greedy = DEMO_POLICY_DEFECTS.greedy!;
  const also = NEXT_POLICY_DEFECTS.alsoGreedy!;
  const floor = DEMO_POLICY_DEFECTS.floor!;
  const p = NEXT_PLAN;
  const recipe = PROMOTIONS[p.misloggedAction]!;
  const week = { from: iso(NEXT_START_MS), to: iso(NEXT_END_MS) };
  const v81 = { from: iso(p.v81FromMs), to: iso(NEXT_END_MS) };
  return {
    ...manifestHead('next', seed, t, 'xoshiro128** 1.1 seeded through mulberry32 (seed xor 0x9e3779b9)', NEXT_START_MS, NEXT_END_MS, NEXT_DAYS),
    policy_versions: [
      { version: V8.version, from: iso(NEXT_START_MS), to: iso(p.v81FromMs), softmax_scale: V8.scale, epsilon: V8.epsilon },
      { version: V8_1.version, from: iso(p.v81FromMs), to: iso(NEXT_END_MS), softmax_scale: V8_1.scale, epsilon: V8_1.epsilon },
    ],
    policy_switch_at: iso(p.v81FromMs),
    defects: [
      {
        kind: 'propensity.exploration', also_detected_by: ['support.target', 'balance.weights'],
        segment: { region: REGIONS[also.region]!, device: DEVICES[also.device]! }, action: PROMOTIONS[also.action]!,
        magnitude: { propensity: 1, share_of_rows: share(t.alsoGreedyRows) }, rows_affected: t.alsoGreedyRows,
        description: 'New this week: the policy is greedy in east-ridge on ios for the whole week (every tenure and hour), always produce-box with propensity 1.',
      },
      {
        kind: 'balance.weights', also_detected_by: ['drift.policy'],
        segment: {}, action: recipe, window: v81,
        magnitude: { factor: p.misloggedFactor, share_of_rows: share(t.misloggedRows), mean_inverse_propensity: round6(t.misloggedInverseSum / Math.max(1, t.misloggedRows)) },
        rows_affected: t.misloggedRows,
        description: `New this week: from day 4 policy v8.1 (v8's probabilities, unchanged) logs half the probability with which ${recipe} was drawn, everywhere but riverside (whose rows still log v7's propensity).`,
      },
      {
        kind: 'propensity.exploration', also_detected_by: ['support.target'],
        segment: { region: REGIONS[greedy.region]!, device: DEVICES[greedy.device]! }, action: PROMOTIONS[greedy.action]!,
        magnitude: { propensity: 1, share_of_rows: share(t.greedyRows) }, rows_affected: t.greedyRows,
        description: 'As in the demo log: greedy in old-town on web, always free-delivery with propensity 1.',
      },
      {
        kind: 'balance.weights', also_detected_by: ['drift.policy'],
        segment: { region: REGIONS[p.staleRegion]! }, window: week,
        magnitude: { share_of_rows: share(t.staleRows) }, rows_affected: t.staleRows,
        description: 'As in the demo log: riverside rows log v7\'s propensity while v8 (then v8.1) draws the action.',
      },
      {
        kind: 'identity.duplicates', also_detected_by: [], segment: {},
        magnitude: { duplicated_ids: t.duplicateRows, extra_rows: t.duplicateRows, share_of_rows: share(t.duplicateRows) },
        rows_affected: t.duplicateRows, description: 'As in the demo log: 0.3% of decisions written twice.',
      },
      {
        kind: 'reward.validity', also_detected_by: ['drift.reward'], segment: {},
        window: { from: iso(p.missingRewardFromMs), to: iso(NEXT_END_MS) },
        magnitude: { hours: 12, share_of_rows: share(t.missingRewardRows) }, rows_affected: t.missingRewardRows,
        description: 'As in the demo log, the latest feedback has not arrived; the lag is 12 hours this week (36 in the demo log).',
      },
      {
        kind: 'support.floor', also_detected_by: ['weights.tail'],
        segment: { tenure: TENURES[floor.tenure]! }, action: PROMOTIONS[floor.action]!,
        magnitude: { propensity: floor.probability, floor: 0.01, share_of_rows: share(t.floorRows) }, rows_affected: t.floorRows,
        description: 'As in the demo log: household gets exactly 0.002 among new customers.',
      },
    ],
    changes_since: {
      baseline_log: 'maple-row-demo',
      worse: [
        {
          checks: ['propensity.exploration', 'support.target'],
          where: [
            { checks: ['propensity.exploration', 'balance.weights', 'support.target', 'weights.ess', 'segments'], segment: { region: REGIONS[also.region]!, device: DEVICES[also.device]! } },
            { checks: ['support.target'], segment: { region: REGIONS[greedy.region]!, device: DEVICES[greedy.device]! } },
          ],
          description: 'Exploration lapsed in east-ridge on ios: a new failing exploration finding, its segments no longer ready, the '
            + 'promotions never shown there fail the balance test, and the v9 target\'s unsupported mass now passes the fail '
            + 'threshold, which turns the support check and its old-town/web findings from warn to fail.',
        },
        {
          checks: [],
          where: [{ checks: ['balance.weights'], segment: {}, action: recipe }],
          description: `Policy v8.1 mis-logs the propensity of ${recipe}: new failing balance findings for ${recipe} (by action, time, version and segment). `
            + 'The column-roles check stays quiet: no other column balances, so the action column is right and its propensities are wrong.',
        },
        {
          checks: [],
          where: [{ checks: ['balance.weights'], segment: { region: REGIONS[p.staleRegion]! } }],
          description: 'A consequence of a persisting defect: riverside\'s stale v7 propensities now cover the whole log instead of '
            + 'its second half, so balance tests by segment within riverside fail too (in the demo log only the test by policy version did).',
        },
      ],
      better: [
        {
          checks: ['propensity.range'], where: [{ checks: ['propensity.range'], segment: { device: 'android' } }],
          description: 'Fixed: android propensities are logged again (the demo log lost them on days 9-10).',
        },
        {
          checks: [], where: [{ checks: ['drift.reward'], segment: { tenure: 'lapsed' } }],
          description: 'Not a fix: lapsed customers order at the halved rate all week, so there is no drift within this week to report; the level change happened in the demo log.',
        },
      ],
    },
  };
}
