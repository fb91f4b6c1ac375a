/**
 * Reading a report: every reader (the CLI, the engine host's client, the app's stored audits) checks a
 * report against the contract (app/core/model/report.ts) before using it. No platform imports, so the
 * page and Node validate alike.
 */
import type { z } from 'zod';
import { REPORT_SCHEMA_ID, ReportSchema, type Report } from '../core/model/report.ts';
import { toJsonValue } from './serialize.ts';

export interface ValidationResult {
  ok: boolean;
  errors: string[];
}

function describeIssue(issue: z.core.$ZodIssue): string {
  const at = issue.path.length ? `/${issue.path.map(String).join('/')}` : '(root)';
  return `${at} ${issue.message}`;
}

/** Validates the report as it would be written to JSON (non-finite numbers already null). */
export function validateReport(report: Report | Record<string, unknown>): ValidationResult {
  let json: unknown;
  try {
    json = toJsonValue(report);
  } catch (error) {
    return { ok: false, errors: [`(root) cannot be written as JSON: ${(error as Error).message}`] };
  }
  const result = ReportSchema.safeParse(json);
  return result.success ? { ok: true, errors: [] } : { ok: false, errors: result.error.issues.map(describeIssue) };
}

export class ReportContractError extends Error {
  constructor(readonly what: string, readonly errors: readonly string[]) {
    super(`${what} is not a valid ${REPORT_SCHEMA_ID} report: ${errors.slice(0, 5).join('; ')}${errors.length > 5 ? `; and ${errors.length - 5} more` : ''}`);
    this.name = 'ReportContractError';
  }
}

/**
 * The value as a report, or a ReportContractError naming what is wrong. A report of a later contract
 * version (counterweight.report/2, …) is named as such rather than listed field by field.
 */
export function parseReport(value: unknown, what = 'the report'): Report {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) throw new ReportContractError(what, ['(root) is not an object']);
  const schema = (value as { schema?: unknown }).schema;
  if (typeof schema === 'string' && schema.startsWith('counterweight.report/') && schema !== REPORT_SCHEMA_ID) {
    throw new ReportContractError(what, [`/schema is ${JSON.stringify(schema)}; this version of Counterweight reads ${REPORT_SCHEMA_ID}`]);
  }
  const result = validateReport(value as Record<string, unknown>);
  if (!result.ok) throw new ReportContractError(what, result.errors);
  return value as Report;
}
