import type { CheckId, Finding, Report, Series } from '../../app/core/model/report.ts';

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

/**
 * The segment behind row `row` of a segments × actions map, from the series' `segment_keys`; null when the
 * report does not say (one written before segment keys existed): its label is for display only.
 */
export function segmentOfRow(series: Series, row: number): Record<string, string> | null {
  const keys = series.segment_keys;
  const parts = keys?.axis === 'y' ? keys.segments[row] : undefined;
  return parts ? Object.fromEntries(parts.map((p) => [p.column, p.value])) : null;
}

/** Findings of any check about this segment (or a coarser one containing it) and this action. */
export function findingsForCell(report: Report, segment: Readonly<Record<string, string>> | null, action: string): CellFinding[] {
  if (segment === null) return [];
  const inSegment = (f: Finding) => {
    const keys = Object.keys(f.segment);
    return keys.length > 0 && keys.every((k) => segment[k] === f.segment[k]);
  };
  return report.checks.flatMap((c) =>
    c.findings.filter((f) => inSegment(f) && (f.action === undefined || f.action === action)).map((finding) => ({ check: c.id, title: c.title, finding })),
  );
}
