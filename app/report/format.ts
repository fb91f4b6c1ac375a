/** Number formatting shared by the terminal summary and the HTML report. Never prints NaN or Infinity. */
import { countText } from '../core/count-words.ts';

export function fmtNumber(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  if (Number.isInteger(value) && Math.abs(value) < 1e15) return countText(value);
  const abs = Math.abs(value);
  if (abs !== 0 && (abs < 1e-3 || abs >= 1e7)) return value.toExponential(Math.max(0, digits - 1));
  return value.toLocaleString('en-US', { maximumSignificantDigits: Math.max(digits, 1) + (abs >= 1 ? Math.floor(Math.log10(abs)) : 0) });
}

export function fmtShare(value: number | null | undefined, digits = 1): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  return `${(value * 100).toFixed(digits)}%`;
}

export function fmtInterval(low: number | null, high: number | null): string {
  if (low === null || high === null || !Number.isFinite(low) || !Number.isFinite(high)) return '—';
  return `[${fmtNumber(low)}, ${fmtNumber(high)}]`;
}

export function fmtCell(value: unknown): string {
  if (value === null || value === undefined) return '—';
  if (typeof value === 'number') return fmtNumber(value);
  if (typeof value === 'bigint') return value.toString();
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'string') return value;
  return JSON.stringify(value, (_k, v: unknown) => (typeof v === 'bigint' ? v.toString() : v));
}

/** An instant as an engine hands a timestamp over ("2026-03-02T00:21:28.000000Z"): date, time to the second, and a fraction only when it is not zero. */
const LOGGED_INSTANT = /^(\d{4,}-\d\d-\d\d)T(\d\d:\d\d:\d\d)(\.\d+)?Z$/;

/** A logged timestamp for people: "2026-03-02 00:21:28" (UTC, which the table says once), "… 00:21:28.5" with a fraction; other text as it is. */
export function loggedInstantText(value: string): string {
  const m = LOGGED_INSTANT.exec(value);
  if (!m) return value;
  const fraction = m[3] && !/^\.0+$/.test(m[3]) ? m[3].replace(/0+$/, '') : '';
  return `${m[1]} ${m[2]}${fraction}`;
}

/**
 * A value of a logged row (a finding's example rows, the row browser): as it was logged, with no rounding and no
 * digit grouping (a propensity 0.3265053 or an id 1234 reads as it is), timestamps as loggedInstantText writes them.
 */
export function loggedValueText(value: unknown, nullText = 'null'): string {
  if (value === null || value === undefined) return nullText;
  if (typeof value === 'number' || typeof value === 'bigint') return String(value);
  if (typeof value === 'string') return loggedInstantText(value);
  return fmtCell(value);
}

export function fmtSegment(segment: Record<string, string>): string {
  const parts = Object.entries(segment).map(([k, v]) => `${k}=${v}`);
  return parts.length ? parts.join(', ') : '(all rows)';
}

/** An instant as the report writes it (check messages and metrics keep it; the JSON report too): ISO 8601 in UTC ("2026-03-17T06:00:00.000Z"). */
const ISO_INSTANT = /(\d{4}-\d{2}-\d{2})T(\d{2}:\d{2})(?::\d{2}(?:\.\d+)?)?Z/;
const ISO_INSTANTS = new RegExp(ISO_INSTANT.source, 'g');
const ISO_RANGES = new RegExp(`${ISO_INSTANT.source} to ${ISO_INSTANT.source}`, 'g');

/** Text with the report's ISO instants written for people (the app, the terminal and the HTML report; time.coverage's own words): "A to B UTC", or "A UTC" for one alone. */
export function withTimesInWords(text: string): string {
  return text
    .replace(ISO_RANGES, (_all, d1: string, h1: string, d2: string, h2: string) => `${d1} ${h1} to ${d2} ${h2} UTC`)
    .replace(ISO_INSTANTS, (_all, d: string, h: string) => `${d} ${h} UTC`);
}
