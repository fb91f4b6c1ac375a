/**
 * The next-log plan as a file for whoever owns the logging policy: JSON (counterweight.plan/1) and CSV, one row per
 * segment (the whole log first). Pure: the app's Remedies screen writes these bytes.
 */
import type { PlanRowReport } from '../core/model/report.ts';
import { neutraliseCell } from '../core/targets/csv-cell.ts';

export const PLAN_SCHEMA_ID = 'counterweight.plan/1';

export interface PlanExport {
  readonly target: string;
  readonly options: { readonly delta: number; readonly power: number; readonly alpha: number; readonly days: number };
  /** the standard error the estimate must reach, δ / (z₁₋α/₂ + z_power) */
  readonly target_se: number;
  readonly ab_rows_per_arm: number | null;
  readonly segment_columns: readonly string[];
  readonly rows: readonly PlanRowReport[];
}

const finiteOrNull = (_key: string, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) ? null : v);

export function planJson(p: PlanExport): string {
  return `${JSON.stringify({ schema: PLAN_SCHEMA_ID, ...p }, finiteOrNull, 2)}\n`;
}

const PLAN_COLUMNS = ['rows_per_day', 'share', 'floor', 'days', 'rows', 'reachable', 'cost', 'logging_value', 'current_floor'] as const;

/** RFC 4180: a field holding a comma, quote or line break is quoted, quotes doubled; formula starts neutralised. */
function field(value: string | number | boolean | null): string {
  const text = value === null ? '' : neutraliseCell(String(value));
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

/** One line per plan row: target, the segment's values (empty for the whole log), then the plan's figures. */
export function planCsv(p: PlanExport): string {
  const header = ['target', ...p.segment_columns, ...PLAN_COLUMNS];
  const lines = p.rows.map((r) => [r.target, ...p.segment_columns.map((c) => r.segment[c] ?? ''), ...PLAN_COLUMNS.map((k) => r[k])].map(field).join(','));
  return `${[header.map(field).join(','), ...lines].join('\r\n')}\r\n`;
}
