/** The JSON face of a report: stable serialisation and validation against the published JSON Schema. */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import Ajv, { type ErrorObject, type ValidateFunction } from 'ajv';
import Ajv2020 from 'ajv/dist/2020.js';
import type { Report } from '../core/model/report.ts';

export const REPORT_SCHEMA_PATH = fileURLToPath(new URL('../core/model/report.schema.json', import.meta.url));

/** Top-level keys in the order of the Report type (DESIGN.md §6); unknown keys follow in their own order. */
export const REPORT_KEY_ORDER = [
  'schema', 'tool', 'input', 'roles', 'settings', 'verdict', 'reasons', 'checks', 'targets', 'segments', 'queries', 'cautions', 'run', 'signoff',
] as const;

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

export interface ValidationResult {
  ok: boolean;
  errors: string[];
}

let compiled: ValidateFunction | undefined;

function validator(): ValidateFunction {
  if (compiled) return compiled;
  let schema: Record<string, unknown>;
  try {
    schema = JSON.parse(readFileSync(REPORT_SCHEMA_PATH, 'utf8')) as Record<string, unknown>;
  } catch (error) {
    throw new Error(`cannot read the report JSON Schema at ${REPORT_SCHEMA_PATH}: ${(error as Error).message}`);
  }
  const draft2020 = typeof schema.$schema === 'string' && schema.$schema.includes('2020-12');
  const options = { allErrors: true, strict: false };
  const ajv = draft2020 ? new Ajv2020(options) : new Ajv(options);
  // Formats the schema may use, checked without the ajv-formats package (RFC 3339 date-time).
  ajv.addFormat('date-time', /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?(Z|[+-]\d{2}:\d{2})$/);
  const compiledNow = ajv.compile(schema);
  compiled = compiledNow;
  return compiledNow;
}

function describe(error: ErrorObject): string {
  return `${error.instancePath || '(root)'} ${error.message ?? 'is invalid'}${error.params && Object.keys(error.params).length ? ` ${JSON.stringify(error.params)}` : ''}`;
}

/** Validates the report as it would be written to JSON (non-finite numbers already null). */
export function validateReport(report: Report | Record<string, unknown>): ValidationResult {
  const validate = validator();
  const ok = validate(toJsonValue(report)) as boolean;
  return { ok, errors: ok ? [] : (validate.errors ?? []).map(describe) };
}
