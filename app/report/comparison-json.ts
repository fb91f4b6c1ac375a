/** The comparison's JSON text and its validation (no platform imports: the page and Node write the same bytes). */
import type { z } from 'zod';
import { COMPARISON_KEYS, ComparisonSchema, type Comparison } from '../core/compare/contract.ts';
import { serializeReport } from './serialize.ts';

function ordered(c: Comparison | Record<string, unknown>): Record<string, unknown> {
  const value = c as Record<string, unknown>;
  const out: Record<string, unknown> = {};
  for (const key of COMPARISON_KEYS) if (key in value) out[key] = value[key];
  for (const key of Object.keys(value)) if (!(key in out)) out[key] = value[key];
  return out;
}

/** Keys in contract order, two-space indented, non-finite numbers as null (the report writer's rules). */
export function serializeComparison(c: Comparison): string {
  return serializeReport(ordered(c));
}

const describeIssue = (issue: z.core.$ZodIssue): string => `${issue.path.length ? `/${issue.path.map(String).join('/')}` : '(root)'} ${issue.message}`;

export function validateComparison(value: unknown): { ok: boolean; errors: string[] } {
  const json: unknown = value !== null && typeof value === 'object' ? JSON.parse(serializeReport(value as Record<string, unknown>)) : value;
  const result = ComparisonSchema.safeParse(json);
  return result.success ? { ok: true, errors: [] } : { ok: false, errors: result.error.issues.map(describeIssue) };
}
