import type { CheckId, Finding, Report, Series } from '../../app/core/model/report.ts';
import { ident, literal } from '../../app/core/sql/quote.ts';
import { segmentLabel } from '../format.ts';

export interface SegmentHeatmap {
  readonly check: CheckId;
  readonly series: Series;
}

export interface CellFinding {
  readonly check: CheckId;
  readonly title: string;
  readonly finding: Finding;
}

/** Every segments × actions map the checks expose, in check order. */
export function segmentHeatmaps(report: Report): SegmentHeatmap[] {
  return report.checks.flatMap((c) => (c.series ?? []).filter((s) => s.kind === 'heatmap' && s.y && s.y.length > 0).map((series) => ({ check: c.id, series })));
}

/** Ways a check may print a segment as one axis label. */
function labelsOf(segment: Readonly<Record<string, string>>): string[] {
  const values = Object.values(segment);
  return [segmentLabel(segment), values.join(' / '), values.join(' · '), values.join(', '), values.join('|'), values.join(' | ')];
}

/** Checks label a segment by its values in segment-column order, joined with " · ". */
export function segmentForLabel(report: Report, label: string): Record<string, string> | null {
  const columns = report.roles.segments;
  const values = label.split(' · ');
  if (columns.length > 0 && values.length === columns.length) return Object.fromEntries(columns.map((c, i) => [c, values[i] as string]));
  for (const s of report.segments) if (labelsOf(s.segment).includes(label)) return { ...s.segment };
  for (const c of report.checks) for (const f of c.findings) if (labelsOf(f.segment).includes(label)) return { ...f.segment };
  return null;
}

/** Findings of any check about this segment (or a coarser one containing it) and this action. */
export function findingsForCell(report: Report, segment: Readonly<Record<string, string>> | null, label: string, action: string): CellFinding[] {
  const inSegment = (f: Finding) => {
    const keys = Object.keys(f.segment);
    if (keys.length === 0) return false;
    if (labelsOf(f.segment).includes(label)) return true;
    return segment !== null && keys.every((k) => segment[k] === f.segment[k]);
  };
  return report.checks.flatMap((c) =>
    c.findings.filter((f) => inSegment(f) && (f.action === undefined || f.action === action)).map((finding) => ({ check: c.id, title: c.title, finding })),
  );
}

/** SQL selecting the cell's rows, for a reader to re-run against the log (called `log` here). */
export function cellSql(report: Report, segment: Readonly<Record<string, string>> | null, action: string): string | null {
  const actionColumn = report.roles.action;
  if (!actionColumn || !segment) return null;
  const where = [...Object.entries(segment).map(([k, v]) => `${ident(k)} = ${literal(v)}`), `${ident(actionColumn)} = ${literal(action)}`];
  return `SELECT *\nFROM log\nWHERE ${where.join('\n  AND ')}`;
}
