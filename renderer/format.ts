import type { Cell } from '../app/core/table.ts';
import { countText } from '../app/core/count-words.ts';
import { isShareMetric } from '../app/charts/labels.ts';
import { loggedValueText, withTimesInWords } from '../app/report/format.ts';

// Number.prototype.toLocaleString builds a new Intl.NumberFormat on every call (ECMA-402 §19.4.1), which is slow
// for a table of hundreds of cells; the same formats, built once, give the same text.
const WHOLE = new Intl.NumberFormat('en', { maximumFractionDigits: 0 });
const FOUR_DIGITS = new Intl.NumberFormat('en', { maximumSignificantDigits: 4 });
const THREE_DIGITS = new Intl.NumberFormat('en', { maximumSignificantDigits: 3 });

/** Display formatting only; every number shown was computed in app/core. */
export function formatValue(value: Cell | undefined): string {
  if (value === null || value === undefined) return '—';
  if (typeof value === 'number') {
    if (Number.isInteger(value)) return countText(value);
    if (!Number.isFinite(value)) return String(value);
    const abs = Math.abs(value);
    if (abs !== 0 && (abs < 0.001 || abs >= 1e9)) return value.toExponential(3);
    // Counts and sums keep every integer digit; only the fraction is shortened.
    return abs >= 1000 ? WHOLE.format(value) : FOUR_DIGITS.format(value);
  }
  if (typeof value === 'bigint') return countText(value);
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'string') return value;
  return JSON.stringify(value, (_k, v: unknown) => (typeof v === 'bigint' ? v.toString() : v));
}

export function formatShare(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  return `${THREE_DIGITS.format(value * 100)}%`;
}

export function segmentLabel(segment: Readonly<Record<string, string>>): string {
  const parts = Object.entries(segment).map(([k, v]) => `${k}=${v}`);
  return parts.length === 0 ? 'all rows' : parts.join(', ');
}

/** An instant as the report writes it: ISO 8601 in UTC ("2026-03-17T06:00:00.000Z"). */
const ISO_INSTANT = /(\d{4}-\d{2}-\d{2})T(\d{2}:\d{2})(?::\d{2}(?:\.\d+)?)?Z/;
const MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];

const ONE_INSTANT = new RegExp(`^${ISO_INSTANT.source}$`);

/** Whether a value is one instant as the report writes it (a metric such as a first or last decision). */
export function isInstant(value: unknown): value is string {
  return typeof value === 'string' && ONE_INSTANT.test(value);
}

/** "2026-03-17T06:00:00.000Z" -> "2026-03-17 06:00" (UTC, which the caller says once); other text as it is. */
export function timeText(value: string): string {
  const m = ISO_INSTANT.exec(value);
  return m && m.index === 0 ? `${m[1]} ${m[2]}` : value;
}

/**
 * A time bucket's label on a chart axis: "17 Mar", or "17 Mar 06:00" when the buckets are shorter than a day
 * (`withHour`); UTC, which the chart's caption says.
 */
export function bucketLabel(value: string, withHour: boolean): string {
  const m = ISO_INSTANT.exec(value);
  if (!m || m.index !== 0) return value;
  const [, day = '', hour = ''] = m;
  const text = `${Number(day.slice(8, 10))} ${MONTHS[Number(day.slice(5, 7)) - 1] ?? ''}`;
  return withHour ? `${text} ${hour}` : text;
}

/** Whether time-bucket labels need their hour: some bucket starts other than at midnight. */
export function bucketsNeedHour(labels: readonly unknown[]): boolean {
  return labels.some((l) => typeof l === 'string' && !l.includes('T00:00:00'));
}

export { loggedValueText, withTimesInWords };

/** A metric's value: a share as a percent (as everywhere else in the app), an instant as "2026-03-17 06:00" (UTC). */
export function metricText(key: string, value: Cell | undefined): string {
  if (isInstant(value)) return timeText(value);
  if (typeof value === 'number' && isShareMetric(key)) return formatShare(value);
  // text holding instants (drift.policy's version switches, "a→b@2026-03-08T00:00:00.000Z") reads as the messages do
  if (typeof value === 'string') return withTimesInWords(value);
  return formatValue(value);
}
