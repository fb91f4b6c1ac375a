/**
 * The report's JSON text, with no platform imports so that the page and Node write the same bytes
 * (the digest of a sign-off is computed over this serialisation).
 */
import { REPORT_KEYS, type Report } from '../core/model/report.ts';

/** Top-level keys in the order the contract declares them (app/core/model/report.ts); unknown keys follow in their own order. */
export const REPORT_KEY_ORDER = REPORT_KEYS;

/**
 * JSON has no NaN or Infinity: a non-finite number becomes null (the model's "not available"). A bigint
 * (example rows keep BIGINT cells exact) becomes a number when it is a safe integer, else a decimal string.
 */
function jsonReplacer(_key: string, value: unknown): unknown {
  if (typeof value === 'number' && !Number.isFinite(value)) return null;
  if (typeof value === 'bigint') {
    return value >= BigInt(Number.MIN_SAFE_INTEGER) && value <= BigInt(Number.MAX_SAFE_INTEGER) ? Number(value) : value.toString();
  }
  return value;
}

export function orderReportKeys(report: Record<string, unknown>): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const key of REPORT_KEY_ORDER) if (key in report) out[key] = report[key];
  for (const key of Object.keys(report)) if (!(key in out)) out[key] = report[key];
  return out;
}

export function serializeReport(report: Report | Record<string, unknown>): string {
  return `${JSON.stringify(orderReportKeys(report as Record<string, unknown>), jsonReplacer, 2)}\n`;
}

/** The report as a reader of the JSON file sees it (what validation and digests apply to). */
export function toJsonValue(report: Report | Record<string, unknown>): Record<string, unknown> {
  return JSON.parse(serializeReport(report)) as Record<string, unknown>;
}

