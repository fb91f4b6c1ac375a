/** The JSON face of a report: stable serialisation and validation against the published JSON Schema. */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import Ajv, { type ErrorObject, type ValidateFunction } from 'ajv';
import Ajv2020 from 'ajv/dist/2020.js';
import type { Report } from '../core/model/report.ts';
import { toJsonValue } from './serialize.ts';

export const REPORT_SCHEMA_PATH = fileURLToPath(new URL('../core/model/report.schema.json', import.meta.url));

export { REPORT_KEY_ORDER, orderReportKeys, serializeReport, toJsonValue } from './serialize.ts';

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
