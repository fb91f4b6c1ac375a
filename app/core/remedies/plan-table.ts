/**
 * The next-log plan as a table to hand to whoever owns the logging policy (`audit --plan FILE.csv|FILE.json`):
 * one row per target and segment, the whole log first. CSV cells are neutralised against spreadsheet formulas
 * (app/core/targets/csv-cell.ts); segment values come from the log.
 */
import type { Remedies } from '../model/report.ts';
import { csvField } from '../targets/csv-cell.ts';

export const PLAN_COLUMNS = ['target', 'segment', 'rows_per_day', 'share', 'floor', 'days', 'reachable', 'cost', 'logging_value', 'current_floor'] as const;

const segmentText = (segment: Readonly<Record<string, string>>) => {
  const parts = Object.entries(segment).map(([k, v]) => `${k}=${v}`);
  return parts.length ? parts.join('; ') : '(whole log)';
};

/** With no remedies (the audit lacked the action, propensity or reward role) the table has no rows. */
export function planJson(remedies: Remedies | undefined): string {
  return `${JSON.stringify({ options: remedies?.plan_options ?? null, reward_range: remedies?.reward_range ?? null, rows: remedies?.plan ?? [] }, null, 2)}\n`;
}

export function planCsv(remedies: Remedies | undefined): string {
  const lines = [PLAN_COLUMNS.join(',')];
  for (const r of remedies?.plan ?? []) {
    const values = [r.target, segmentText(r.segment), r.rows_per_day, r.share, r.floor, r.days, r.reachable, r.cost, r.logging_value, r.current_floor];
    lines.push(values.map((v) => csvField(v === null ? '' : String(v))).join(','));
  }
  return `${lines.join('\r\n')}\r\n`;
}
