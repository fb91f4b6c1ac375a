/**
 * Words for the report's numbers, shared by the UI, the HTML report and the terminal: a human label, a
 * one-line plain explanation and its source for every metric key, and the one status vocabulary.
 */
import type { CheckResult } from '../core/model/report.ts';
import { SETTINGS, type SettingSpec } from '../core/settings.ts';
import { countText } from '../core/count-words.ts';

export interface MetricWords {
  readonly label: string;
  /** one plain sentence: what the number is */
  readonly explain: string;
  /** where the formula or threshold comes from: a paper, or "common practice" */
  readonly source?: string;
  /** 'share' for a fraction of a whole (rows, mass, weight), shown as a percent as the rest of the app shows shares */
  readonly unit?: 'share';
}

const HT = 'Horvitz & Thompson 1952 (inverse-probability weighting)';
const KISH = 'Kish 1965, Survey Sampling (effective sample size)';
const PSIS = 'Vehtari, Simpson, Gelman, Yao & Gabry, JMLR 2024 (Pareto-smoothed importance sampling)';
const BH = 'Benjamini & Hochberg 1995 (false discovery rate)';
const DELTA = 'normal approximation; delta method for the ratio (SNIPS)';
const POWER = 'two-sided test at 5%, 80% power: 2.8 standard errors (common practice)';

export const METRIC_WORDS: Readonly<Record<string, MetricWords>> = {
  rows: { label: 'Rows', explain: 'Rows of the log counted here.' },
  segment_columns: { label: 'Segment columns', explain: 'How many columns break the log into segments.' },
  segments: { label: 'Segments', explain: 'Distinct combinations of segment values in the log.' },
  above_one: { label: 'Propensity above 1', explain: 'Rows whose logged probability is greater than 1, which no probability can be.' },
  equal_one: { label: 'Propensity exactly 1', explain: 'Rows logged as certain choices; they carry no exploration.' },
  nan: { label: 'Propensity not a number', explain: 'Rows whose logged probability is NaN.' },
  non_positive: { label: 'Propensity 0 or below', explain: 'Rows whose logged probability is 0 or negative; their weight 1/p is undefined.' },
  null: { label: 'Propensity missing', explain: 'Rows with no logged probability.' },
  invalid_rows: { label: 'Rows with an invalid propensity', explain: 'Rows whose propensity is missing, not a number, 0 or below, or above 1.' },
  invalid_share: { label: 'Share with an invalid propensity', explain: 'Invalid-propensity rows as a share of all rows.', unit: 'share' },
  share_in_group: { label: 'Share of the group', explain: 'Invalid rows as a share of the rows in this group.', unit: 'share' },
  share_of_invalid: { label: 'Share of all invalid rows', explain: 'How much of the log’s invalid propensities fall in this group.', unit: 'share' },
  actions: { label: 'Actions', explain: 'Distinct actions in the log.' },
  balance: { label: 'Weight balance B', explain: '(1/n) Σ 1{A=a}/p for this group: 1 when the logged propensities are right and the action is offered everywhere.', source: HT },
  mean_inverse_propensity: { label: 'Mean of 1/p', explain: 'Average inverse propensity; with every action offered it equals the number of actions.', source: HT },
  z: { label: 'z score', explain: 'How many standard errors the weight balance is from 1.' },
  se: { label: 'Standard error', explain: 'The standard error of the number beside it.' },
  p_adjusted: { label: 'Adjusted p-value', explain: 'The p-value after the Benjamini–Hochberg correction for the many groups tested.', source: BH },
  tests: { label: 'Tests', explain: 'How many groups were tested.' },
  failing: { label: 'Groups out of balance', explain: 'Groups whose weight balance is significantly away from 1 by enough to bias a primary target’s estimate beyond its tolerance.' },
  groups: { label: 'Groups', explain: 'Groups tested (segment × action, time window × action, version × action).' },
  scope: { label: 'Group kind', explain: 'What the group is made of: overall, segment, time window or policy version.' },
  version: { label: 'Policy version', explain: 'The logging policy version of this group.' },
  set_aside: { label: 'Segments set aside', explain: 'Segment × action pairs left out of the action’s balance tests because its propensity falls below the floor ε there, where a few rare huge weights decide B.' },
  set_aside_rows: { label: 'Rows set aside', explain: 'Rows of the segments set aside from an action’s balance tests.' },
  significant: { label: 'Significant deviations', explain: 'Balance tests rejected at the false discovery rate, before their size is weighed.', source: BH },
  reward_scale: { label: 'Reward scale R', explain: 'A bound on the reward’s size, max(|min|, |max|, max − min), which turns a balance deviation into a bias bound.' },
  bias_bound: { label: 'Bias bound', explain: 'The most this deviation could move the target’s IPS estimate: |B − 1| × the target’s mass on these rows × R.', source: 'Dudík, Langford & Li 2011, Theorem 1' },
  bias_tolerance: { label: 'Bias tolerated', explain: 'The smaller of 0.5 standard errors of the target’s estimate and the share of R that support.target allows unsupported mass.', source: 'Cochran 1977, Sampling Techniques, §1.8' },
  bias_target: { label: 'Target most affected', explain: 'The primary target whose estimate this deviation could bias most, against its tolerance.' },
  all_propensities_one: { label: 'All propensities 1', explain: 'Every row in the segment was logged as a certain choice.' },
  top_action_share_min: { label: 'Share of the commonest action', explain: 'The share of rows that went to the most frequent action in this segment.', unit: 'share' },
  served_by_target: { label: 'Served by a target', explain: 'Whether a target policy sends traffic to this segment.' },
  sub_segments: { label: 'Smaller segments affected', explain: 'Segment combinations inside this one that show the same problem.' },
  share: { label: 'Share of rows', explain: 'Rows of this group as a share of the log.', unit: 'share' },
  unexplored_segments: { label: 'Unexplored segments', explain: 'Segments where the logging policy did not explore (all p = 1, or one action ≥ 99% of rows).' },
  unexplored_share: { label: 'Rows in unexplored segments', explain: 'Share of the log in segments without exploration.', unit: 'share' },
  cells: { label: 'Segment × action cells', explain: 'Combinations of segment and action counted here.' },
  cells_below_floor: { label: 'Cells under the floor', explain: 'Segment × action cells whose smallest propensity is under the floor ε.' },
  epsilon: { label: 'Propensity floor ε', explain: 'Propensities under this value make weights large; clipping at this order is usual.', source: 'common practice' },
  min_propensity: { label: 'Smallest propensity', explain: 'The smallest logged probability in this group.' },
  rows_below_floor: { label: 'Rows under the floor', explain: 'Rows whose propensity is under the floor ε.' },
  share_below_floor: { label: 'Share under the floor', explain: 'Rows under the floor ε as a share of the log.', unit: 'share' },
  mass: { label: 'Target mass without support', explain: 'Share of the target policy’s probability that falls where the log has no rows.', source: 'Sachdeva, Su & Joachims 2020 (deficient support)', unit: 'share' },
  ess: { label: 'Effective sample size', explain: 'How many rows the weighted estimate is worth: (Σw)² / Σw².', source: KISH },
  ess_fraction: { label: 'ESS as a share of rows', explain: 'Effective sample size divided by the rows it came from.', source: KISH, unit: 'share' },
  max_weight: { label: 'Largest weight', explain: 'The largest importance weight q/p of a single row.' },
  top1_weight_share: { label: 'Weight held by the top 1%', explain: 'Share of the total weight carried by the 1% of rows with the largest weights.', unit: 'share' },
  khat: { label: 'Tail shape k̂', explain: 'Shape of the weights’ largest values: under 0.5 is reliable, above 0.7 the estimate is not to be trusted.', source: PSIS },
  threshold: { label: 'k̂ limit', explain: 'The k̂ above which the weight tail fails: min(1 − 1/log10 n, 0.7).', source: PSIS },
  tail_length: { label: 'Tail rows fitted', explain: 'How many of the largest weights the Pareto fit used.', source: PSIS },
  kind: { label: 'Reward kind', explain: 'Binary (0/1), bounded or continuous, as read from the values.' },
  min: { label: 'Smallest reward', explain: 'The smallest reward value.' },
  max: { label: 'Largest reward', explain: 'The largest reward value.' },
  mean: { label: 'Mean reward', explain: 'The average reward over rows that have one.' },
  missing: { label: 'Rows without a reward', explain: 'Rows whose reward is missing, such as feedback that has not arrived.' },
  missing_share: { label: 'Share without a reward', explain: 'Rows without a reward as a share of the log.', unit: 'share' },
  non_finite: { label: 'Reward not finite', explain: 'Rewards that are NaN or infinite.' },
  change_at: { label: 'Change point', explain: 'Where the reward level changes most, by the best single split of the time series.' },
  mean_before: { label: 'Mean before', explain: 'Average reward before the change point.' },
  mean_after: { label: 'Mean after', explain: 'Average reward after the change point.' },
  relative_change: { label: 'Relative change', explain: '(after − before) / before.' },
  drifting: { label: 'Drifting groups', explain: 'Segment × action groups whose reward changed significantly over time.' },
  test: { label: 'Test', explain: 'The test used: chi-square for 0/1 rewards, one-way ANOVA otherwise.' },
  psi: { label: 'Population stability index', explain: 'How much the action mix moved between the first and last windows; above 0.25 is a large shift.', source: '0.1 / 0.25 bands: common practice' },
  propensities_follow_mix: { label: 'Propensities moved with the mix', explain: 'Whether the logged propensities changed along with the action mix, as they should when the policy changes.' },
  shifts: { label: 'Action-mix shifts', explain: 'Segments whose action mix changed over time.' },
  unexplained: { label: 'Unexplained shifts', explain: 'Shifts in the action mix that the logged propensities do not follow.' },
  version_first: { label: 'First version', explain: 'The policy version at the start of the window.' },
  version_last: { label: 'Last version', explain: 'The policy version at the end of the window.' },
  version_switches: { label: 'Version switches', explain: 'How many times the policy version changed.' },
  ips: { label: 'IPS estimate', explain: 'Inverse-propensity-weighted mean reward the target would have had.', source: HT },
  ips_se: { label: 'IPS standard error', explain: 'Standard error of the IPS estimate.', source: DELTA },
  snips: { label: 'SNIPS estimate', explain: 'IPS divided by the mean weight: steadier, slightly biased.', source: 'Swaminathan & Joachims 2015 (self-normalised estimator)' },
  snips_se: { label: 'SNIPS standard error', explain: 'Standard error of the SNIPS estimate.', source: DELTA },
  dr: { label: 'Doubly robust estimate', explain: 'A segment × action reward model, corrected by weighted residuals.', source: 'Dudík, Langford & Li 2011 (doubly robust)' },
  dr_se: { label: 'Doubly robust standard error', explain: 'Standard error of the doubly robust estimate.' },
  detectable_difference: { label: 'Smallest detectable difference (at 5% two-sided, 80% power)', explain: 'The smallest true difference from the logging policy the estimate would find: 2.8 × its standard error.', source: POWER },
  relative_halfwidth: { label: 'Interval half-width / on-policy value', explain: 'Half the 95% interval as a share of the logging policy’s own value.', unit: 'share' },
  on_policy_value: { label: 'Logging policy’s own value', explain: 'The mean reward the logging policy earned in this log.' },
  on_policy_ci_low: { label: 'Own value, 95% low', explain: 'Lower end of the 95% interval of the logging policy’s mean reward.' },
  on_policy_ci_high: { label: 'Own value, 95% high', explain: 'Upper end of the 95% interval of the logging policy’s mean reward.' },
  rewarded_rows: { label: 'Rows with a reward', explain: 'Rows the estimates could use.' },
  duplicated_ids: { label: 'Repeated decision ids', explain: 'Decision ids that appear on more than one row.' },
  extra_rows: { label: 'Extra rows', explain: 'Rows beyond the first for each repeated id (retried writes, usually).' },
  extra_share: { label: 'Share of extra rows', explain: 'Extra rows as a share of the log.', unit: 'share' },
  rows_in_duplicates: { label: 'Rows with a repeated id', explain: 'All rows whose decision id appears more than once.' },
  max_copies: { label: 'Most copies of one id', explain: 'The most rows sharing one decision id.' },
  bucket: { label: 'Time bucket', explain: 'The width of the time windows the log is cut into.' },
  buckets: { label: 'Time buckets', explain: 'How many time windows the log spans.' },
  bucket_end: { label: 'Last bucket ends', explain: 'When the last time window ends.' },
  empty_buckets: { label: 'Empty time windows', explain: 'Windows inside the log’s span with no rows: gaps in logging.' },
  start: { label: 'First decision', explain: 'Time of the earliest row.' },
  end: { label: 'Last decision', explain: 'Time of the latest row.' },
  span_days: { label: 'Span in days', explain: 'Days between the first and last decision.' },
  future: { label: 'Rows in the future', explain: 'Rows stamped later than the time of the audit.' },
  rows_without_time: { label: 'Rows without a time', explain: 'Rows whose timestamp is missing or does not parse.' },
  deficit: { label: 'Target mass without support', explain: 'Share of the target policy’s probability that falls where the log has no rows.', source: 'Sachdeva, Su & Joachims 2020 (deficient support)', unit: 'share' },
};

const ROLE_WORDS: Readonly<Record<string, string>> = {
  decision_id: 'decision id', time: 'time', action: 'action', propensity: 'propensity', reward: 'reward', policy_version: 'policy version',
  target_propensity: 'target propensity', propensity_vector: 'propensity vector', action_set_size: 'action-set size',
};

/** Words for a metric key, including the keyed forms `<role>.column`, `<role>.null_share` and `<target>.<metric>`. */
export function metricWords(key: string): MetricWords {
  const direct = METRIC_WORDS[key];
  if (direct) return direct;
  const dot = key.lastIndexOf('.');
  if (dot > 0) {
    const head = key.slice(0, dot);
    const tail = key.slice(dot + 1);
    const role = ROLE_WORDS[head];
    if (role && tail === 'column') return { label: `Column for ${role}`, explain: `The log column mapped to the ${role} role.` };
    if (role && tail === 'null_share') return { label: `Missing ${role} values`, explain: `Share of rows where the ${role} column is empty.`, unit: 'share' };
    const inner = METRIC_WORDS[tail];
    if (inner) return { ...inner, label: `${inner.label} — ${head}` };
  }
  return { label: key.replaceAll('_', ' '), explain: 'A figure behind this check; see the exported report for its definition.', ...(/_(share|fraction)$/.test(key) ? { unit: 'share' as const } : {}) };
}

/** Whether a metric is a share of a whole, shown as a percent ("1.57%", not 0.01573). */
export function isShareMetric(key: string): boolean {
  return metricWords(key).unit === 'share';
}

/**
 * The one status vocabulary of the UI, the HTML report and the terminal. A check that does not apply to
 * this log (its roles are absent) is "not applicable"; the estimate preview never decides, so where it
 * passes it is "informational".
 */
export type ShownStatus = 'pass' | 'warn' | 'fail' | 'error' | 'not-applicable' | 'informational' | 'not-run';

export const SHOWN_STATUS: Readonly<Record<ShownStatus, { readonly word: string; readonly text: string; readonly icon: string; readonly explain: string }>> = {
  pass: { word: 'Pass', text: 'PASS', icon: '✓', explain: 'The check found nothing that limits an estimate.' },
  warn: { word: 'Warn', text: 'WARN', icon: '!', explain: 'Worth a look: the estimate may need a caveat.' },
  fail: { word: 'Fail', text: 'FAIL', icon: '✕', explain: 'The log falls short here; a blocking check’s failure means the log does not support the estimate.' },
  error: { word: 'Error', text: 'ERROR', icon: '✕', explain: 'The check failed to run; an error blocks the verdict until it is fixed.' },
  'not-applicable': { word: 'Not applicable', text: 'N/A', icon: '–', explain: 'The log lacks what this check needs (for example a time or decision-id column), so it does not apply.' },
  informational: { word: 'Informational', text: 'INFO', icon: 'i', explain: 'Shown for context; it does not decide the verdict.' },
  'not-run': { word: 'Not run', text: 'NOT RUN', icon: '–', explain: 'The check could not run on this log; its message says why.' },
};

/** How a check's status is shown. */
export function shownStatus(check: Pick<CheckResult, 'id' | 'status' | 'summary'>): ShownStatus {
  if (check.status === 'skipped') return /^could not run/i.test(check.summary) ? 'not-run' : 'not-applicable';
  if (check.id === 'estimate.preview' && check.status === 'pass') return 'informational';
  return check.status;
}

/** A percent for people: 0.01 -> "1%", 0.001 -> "0.1%" (the binary fraction's noise rounded away). */
function percentText(share: number): string {
  return `${Number((share * 100).toPrecision(6))}%`;
}

/**
 * A setting's value as it reads to people, with its unit (`SettingSpec.unit`): shares as percents
 * ("1%"), other units after the number ("0.5 SE", "10 expected events"); a word value ("auto") as it is.
 */
export function settingValueText(key: string, value: number | string | boolean): string {
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value !== 'number') return value;
  const unit = (SETTINGS as Readonly<Record<string, SettingSpec>>)[key]?.unit;
  if (unit === 'share') return percentText(value);
  const n = Number.isInteger(value) ? countText(value) : String(value);
  return unit ? `${n} ${unit}` : n;
}
