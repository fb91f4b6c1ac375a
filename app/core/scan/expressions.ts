/**
 * Row-level SQL expressions for the mapped roles, shared by the cube, tail and example queries so
 * that every query reads the log the same way.
 */
import type { ResolvedRoles } from '../roles/roles.ts';
import type { Dialect } from '../sql/dialect.ts';
import { duckdb } from '../sql/dialect-duckdb.ts';
import type { ColumnProfile, Profile } from './profile.ts';

export const NULL_LABEL = '(null)';
export const OTHER_LABEL = '(other)';

export interface TimeBuckets {
  /** Bucket origin, microseconds since the Unix epoch (UTC-aligned to the width). */
  readonly originUs: number;
  readonly widthUs: number;
  readonly count: number;
  readonly label: string;
}

const HOUR_US = 3_600_000_000;
const NAMED_WIDTHS: readonly [string, number][] = [
  ['1h', HOUR_US],
  ['6h', 6 * HOUR_US],
  ['1d', 24 * HOUR_US],
  ['7d', 7 * 24 * HOUR_US],
  ['30d', 30 * 24 * HOUR_US],
];

function timeUsExpr(roles: ResolvedRoles, profile: Profile, d: Dialect = duckdb): string | null {
  if (!roles.time || !roles.timeEncoding) return null;
  const col = d.ident(roles.time);
  const type = profile.columns.find((c) => c.name === roles.time)?.type.toUpperCase() ?? '';
  switch (roles.timeEncoding) {
    case 'timestamp':
      return /TIME ZONE|TIMESTAMPTZ/.test(type) && d.name === 'duckdb' ? `epoch_us(${col})` : d.epochUs(col);
    case 'text':
      return d.textEpochUs(col);
    case 'epoch_s':
      return `(${d.toBigint(col)} * 1000000)`;
    case 'epoch_ms':
      return `(${d.toBigint(col)} * 1000)`;
    case 'epoch_us':
      return d.toBigint(col);
  }
}

/** Range of the time role in microseconds, from the profile. */
export function timeRangeUs(roles: ResolvedRoles, profile: Profile): [number, number] | null {
  const c: ColumnProfile | undefined = profile.columns.find((x) => x.name === roles.time);
  if (!c || !roles.timeEncoding) return null;
  const factor = roles.timeEncoding === 'epoch_s' ? 1e6 : roles.timeEncoding === 'epoch_ms' ? 1e3 : 1;
  if (roles.timeEncoding === 'timestamp' || roles.timeEncoding === 'text') {
    return c.minTimeUs === null || c.maxTimeUs === null ? null : [c.minTimeUs, c.maxTimeUs];
  }
  return c.min === null || c.max === null ? null : [c.min * factor, c.max * factor];
}

class BucketSettingError extends Error {}

/** Smallest named width giving at most maxBuckets buckets, or the width the setting names. */
export function chooseBuckets(range: [number, number] | null, setting: string | number, maxBuckets: number): TimeBuckets | null {
  if (!range) return null;
  const [lo, hi] = range;
  let width: number | undefined;
  let label: string;
  if (setting === 'auto') {
    const found = NAMED_WIDTHS.find(([, w]) => Math.floor(hi / w) - Math.floor(lo / w) + 1 <= maxBuckets);
    [label, width] = found ?? ['custom', Math.ceil((hi - lo + 1) / maxBuckets)];
  } else {
    const named = NAMED_WIDTHS.find(([n]) => n === setting);
    const seconds = typeof setting === 'number' ? setting : Number(setting);
    if (named) [label, width] = named;
    else if (Number.isFinite(seconds) && seconds > 0) [label, width] = [`${seconds}s`, Math.round(seconds * 1e6)];
    else throw new BucketSettingError(`time.bucket must be 'auto', 1h, 6h, 1d, 7d, 30d or a number of seconds, got ${JSON.stringify(setting)}`);
  }
  const originUs = Math.floor(lo / width) * width;
  const count = Math.floor((hi - originUs) / width) + 1;
  return { originUs, widthUs: width, count, label };
}

export interface RowExpressions {
  /** segment value expressions (uncapped text), in segment order */
  readonly segments: readonly string[];
  readonly action: string;
  readonly propensity: string;
  readonly reward: string;
  readonly bucket: string;
  readonly timeUs: string | null;
  /**
   * The time column itself when it is a plain TIMESTAMP: a window written against the column
   * (`col >= TIMESTAMP '...'`) selects the same rows as one on timeUs, and lets a Parquet scan skip
   * row groups by their statistics.
   */
  readonly timeColumn: string | null;
  readonly version: string | null;
  readonly targetPropensity: string | null;
  readonly decisionId: string | null;
  /** the SQL dialect these expressions are written in; predicates over them use its literals */
  readonly dialect: Dialect;
}

function textValue(col: string, d: Dialect = duckdb): string {
  return `coalesce(${d.toText(d.ident(col))}, ${d.literal(NULL_LABEL)})`;
}

export function rowExpressions(roles: ResolvedRoles, profile: Profile, buckets: TimeBuckets | null, d: Dialect = duckdb): RowExpressions {
  if (!roles.action || !roles.propensity || !roles.reward) throw new Error('action, propensity and reward roles are required to build row expressions');
  const timeUs = timeUsExpr(roles, profile, d);
  const kindOf = (c: string) => profile.columns.find((x) => x.name === c)?.kind ?? 'other';
  const rewardType = kindOf(roles.reward);
  const reward = rewardType === 'boolean' ? d.booleanNumber(d.ident(roles.reward)) : d.numberOf(d.ident(roles.reward), rewardType);
  return {
    segments: roles.segments.map((c) => textValue(c, d)),
    action: textValue(roles.action, d),
    propensity: d.numberOf(d.ident(roles.propensity), kindOf(roles.propensity)),
    reward,
    timeUs,
    timeColumn: timeUs && roles.timeEncoding === 'timestamp' && profile.columns.find((c) => c.name === roles.time)?.type.toUpperCase() === 'TIMESTAMP' ? d.ident(roles.time as string) : null,
    bucket: buckets && timeUs ? `coalesce(${d.toInteger(`floor((${timeUs} - ${buckets.originUs}) / ${buckets.widthUs})`)}, -1)` : '0',
    version: roles.policy_version ? textValue(roles.policy_version, d) : null,
    targetPropensity: roles.target_propensity ? d.numberOf(d.ident(roles.target_propensity), kindOf(roles.target_propensity)) : null,
    decisionId: roles.decision_id ? d.toText(d.ident(roles.decision_id)) : null,
    dialect: d,
  };
}

/** The one rule for a valid propensity: 0 < p <= 1 and not NaN (DuckDB orders NaN above every number). */
export function validPropensity(p: string, d: Dialect = duckdb): string {
  return `(${p} > 0 AND ${p} <= 1 AND NOT ${d.isNaN(p)})`;
}

/** The one rule for a usable reward: present and finite. */
export function finiteReward(r: string, d: Dialect = duckdb): string {
  return `(${r} IS NOT NULL AND ${d.isFinite(r)})`;
}

/** The rules over the cube's base columns p and r. */
export const VALID_P = validPropensity('p');
export const VALID_R = finiteReward('r');
