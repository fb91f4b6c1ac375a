/**
 * Every threshold of the audit, with its default and where the default comes from (README.md, "What the audit checks").
 * The report prints each one with its value, default and source.
 */
export interface SettingSpec {
  readonly default: number | string;
  readonly source: string;
  readonly description: string;
  readonly min?: number;
  readonly max?: number;
  /** how a value reads to people: 'share' is shown as a percent (0.01 -> 1%), other words follow the number (0.5 SE) */
  readonly unit?: string;
}

export const SETTINGS = {
  'identity.duplicates.fail_share': { default: 0.01, source: 'common practice', description: 'fail, and block the verdict, when duplicated rows exceed this share of rows (warn on any)', min: 0, max: 1, unit: 'share' },
  'time.bucket': { default: 'auto', source: 'common practice', description: "time bucket width: 'auto', or one of 1h, 6h, 1d, 7d, or a number of seconds", unit: 's' },
  'time.max_buckets': { default: 60, source: 'common practice', description: "largest number of time buckets 'auto' may choose", min: 2, max: 1000, unit: 'buckets' },
  'propensity.range.fail_share': { default: 0.001, source: 'common practice', description: 'fail when invalid propensities (null, NaN, <= 0, > 1) exceed this share of rows (warn on any)', min: 0, max: 1, unit: 'share' },
  'propensity.exploration.top_action_share': { default: 0.99, source: 'common practice', description: 'a segment is unexplored when one action holds at least this share of its rows, or every propensity is 1', min: 0, max: 1, unit: 'share' },
  'propensity.exploration.min_segment_share': { default: 0.01, source: 'common practice', description: 'fail for an unexplored segment holding at least this share of rows', min: 0, max: 1, unit: 'share' },
  'support.floor.epsilon': { default: 0.01, source: 'common practice; clipping thresholds of this order are usual', description: 'propensity floor ε', min: 0, max: 1 },
  'support.floor.max_share': { default: 0.01, source: 'common practice', description: 'warn when the share of rows with propensity below ε exceeds this', min: 0, max: 1, unit: 'share' },
  'support.target.warn': { default: 0.01, source: 'Sachdeva, Su & Joachims 2020 (deficient support); threshold common practice', description: "warn when this share of a target's probability mass falls on (segment, action) cells the log never covers", min: 0, max: 1, unit: 'share' },
  'support.target.fail': { default: 0.05, source: 'Sachdeva, Su & Joachims 2020 (deficient support); threshold common practice', description: 'fail above this unsupported mass', min: 0, max: 1, unit: 'share' },
  'balance.q': { default: 0.01, source: 'Benjamini & Hochberg 1995 (false discovery rate level)', description: 'false discovery rate for the weight-balance tests', min: 0, max: 1 },
  'balance.min_expected': { default: 10, source: 'common practice (the normal approximation to a binomial count is usual from about 10 expected events)', description: 'below this many expected events of an action in a group, its balance test is the exact binomial test; at or above it, the normal test', min: 0, unit: 'expected events' },
  'balance.max_bias_se': { default: 0.5, source: 'Cochran 1977, Sampling Techniques, §1.8 (a bias of 0.5 standard errors makes a nominal 95% interval miss 7.9% of the time instead of 5%); the bias bound is Dudík, Langford & Li 2011, Theorem 1', description: "a significant balance test fails only where the bias its deviation could put into a primary target's IPS estimate, |B − 1| · (the target's probability mass on the group's rows of the action) · R, with R = max(|min r|, |max r|, max r − min r), exceeds this many of the estimate's standard errors, or support.target.fail · R (the budget support.target allows unsupported mass)", min: 0, unit: 'SE' },
  'weights.ess.warn_fraction': { default: 0.1, source: 'common practice', description: 'warn when ESS / n is below this', min: 0, max: 1, unit: 'share' },
  'weights.ess.fail_min': { default: 100, source: 'common practice', description: 'fail when the Kish effective sample size is below this', min: 0 },
  'weights.tail.warn_khat': { default: 0.5, source: 'Vehtari, Simpson, Gelman, Yao & Gabry 2024', description: 'warn when the Pareto shape k̂ exceeds this; fail above min(1 − 1/log10 n, 0.7)' },
  'reward.validity.warn_null': { default: 0.05, source: 'common practice', description: 'warn when the share of rows without a reward exceeds this', min: 0, max: 1, unit: 'share' },
  'reward.validity.fail_null': { default: 0.2, source: 'common practice', description: 'fail above this share; a time bucket above it is flagged as missing feedback', min: 0, max: 1, unit: 'share' },
  'drift.reward.q': { default: 0.05, source: 'Benjamini & Hochberg 1995 (false discovery rate level)', description: 'false discovery rate for the reward-drift tests', min: 0, max: 1 },
  'drift.reward.min_relative_change': { default: 0.1, source: 'common practice', description: 'warn only when the best change point moves the mean reward by at least this fraction', min: 0, unit: 'share' },
  'drift.policy.q': { default: 0.05, source: 'Benjamini & Hochberg 1995 (false discovery rate level)', description: 'false discovery rate for the action-mix tests', min: 0, max: 1 },
  'drift.policy.min_effect': { default: 0.1, source: 'common practice', description: 'the logged propensities of a window count as not following the action mix only where a significant balance test also has |B − 1| above this', min: 0 },
  'drift.policy.psi_warn': { default: 0.25, source: 'common practice (0.1 / 0.25 bands)', description: 'population stability index of the action mix, first vs last window, above which a shift is large', min: 0 },
  'estimate.preview.max_relative_halfwidth': { default: 0.5, source: 'common practice', description: "warn when a 95% CI half-width exceeds this fraction of the logging policy's own value", min: 0, unit: 'share' },
  'remedies.support.min_rows': { default: 2, source: 'common practice (a leave-one-out cell mean needs 2 rows)', description: 'rows a segment × action pair needs, besides every propensity at or above support.floor.epsilon, to be in the supported region', min: 1, unit: 'rows' },
  'remedies.caps.grid': { default: 8, source: 'common practice', description: 'caps in the weight-cap grid (log-spaced up to the largest weight)', min: 1, max: 50, unit: 'caps' },
  'remedies.plan.power': { default: 0.8, source: 'common practice (Cohen 1988)', description: 'power at which the next log should detect the planned difference', min: 0.5, max: 0.999, unit: 'share' },
  'remedies.plan.alpha': { default: 0.05, source: 'common practice', description: 'two-sided level of the planned test', min: 0.0001, max: 0.5 },
  'remedies.plan.delta': { default: 'auto', source: 'common practice', description: "detectable difference the next log should reach: 'auto' (half the current one) or a number > 0" },
  'remedies.plan.days': { default: 'auto', source: 'common practice', description: "days the next log may run: 'auto' (as long as this log) or a number > 0", unit: 'days' },
  'remedies.max_listed': { default: 50, source: 'common practice', description: 'pairs listed outside the supported region, per target', min: 0, max: 10000, unit: 'pairs' },
  'segments.cap': { default: 50, source: 'common practice', description: 'segment columns keep their most frequent values up to this many; the rest become "(other)"', min: 1, max: 10000, unit: 'values' },
  'examples.per_finding': { default: 3, source: 'common practice', description: 'example rows attached to a finding', min: 0, max: 50, unit: 'rows' },
  'examples.max_findings': { default: 40, source: 'common practice', description: 'findings that get example rows, per audit', min: 0, max: 1000, unit: 'findings' },
} as const satisfies Record<string, SettingSpec>;

export type SettingKey = keyof typeof SETTINGS;
export type Settings = { readonly [K in SettingKey]: (typeof SETTINGS)[K]['default'] extends number ? number : string | number };

export class SettingsError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'SettingsError';
  }
}

/** Defaults overlaid with the caller's values; unknown keys and out-of-range values are errors. */
export function resolveSettings(overrides: Readonly<Record<string, number | string | boolean>> = {}): Settings {
  const out: Record<string, number | string> = {};
  for (const [key, spec] of Object.entries(SETTINGS) as [SettingKey, SettingSpec][]) out[key] = spec.default;
  for (const [key, raw] of Object.entries(overrides)) {
    const spec = (SETTINGS as Record<string, SettingSpec>)[key];
    if (!spec) throw new SettingsError(`unknown setting "${key}"; known settings: ${Object.keys(SETTINGS).join(', ')}`);
    if (typeof spec.default === 'number') {
      const value = typeof raw === 'string' && raw.trim() !== '' ? Number(raw) : raw;
      if (typeof value !== 'number' || !Number.isFinite(value)) throw new SettingsError(`setting "${key}" must be a number, got ${JSON.stringify(raw)}`);
      if (spec.min !== undefined && value < spec.min) throw new SettingsError(`setting "${key}" must be at least ${spec.min}, got ${value}`);
      if (spec.max !== undefined && value > spec.max) throw new SettingsError(`setting "${key}" must be at most ${spec.max}, got ${value}`);
      out[key] = value;
    } else {
      if (typeof raw === 'boolean') throw new SettingsError(`setting "${key}" must be a string or number, got ${raw}`);
      out[key] = raw;
    }
  }
  return out as unknown as Settings;
}
