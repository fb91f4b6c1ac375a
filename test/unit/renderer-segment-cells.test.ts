import { describe, expect, it } from 'vitest';
import type { Report } from '../../app/core/model/report.ts';
import { cellSql, findingsForCell, segmentForLabel, segmentHeatmaps } from '../../renderer/panels/segment-cells.ts';

const finding = (segment: Record<string, string>, action?: string) => ({ segment, ...(action ? { action } : {}), status: 'fail' as const, metrics: {}, message: 'm' });
const report = {
  roles: { action: 'promotion', segments: ['region', 'device'] },
  segments: [],
  checks: [
    { id: 'propensity.exploration', title: 'Exploration', findings: [finding({ region: 'old-town', device: 'web' })], series: [{ name: 'rows', kind: 'heatmap', x: ['bakery'], y: ['old-town · web'], values: [[3]] }] },
    { id: 'support.floor', title: 'Floor', findings: [finding({ region: 'old-town' }, 'household'), finding({ region: 'riverside' })], series: [{ name: 'trend', kind: 'lines', x: [1], values: [[1]] }] },
  ],
} as unknown as Report;

describe('segment map cells', () => {
  it('lists only heatmap series', () => {
    expect(segmentHeatmaps(report).map((m) => m.series.name)).toEqual(['rows']);
  });

  it('reads a segment back from its axis label', () => {
    expect(segmentForLabel(report, 'old-town · web')).toEqual({ region: 'old-town', device: 'web' });
  });

  it('finds findings about the cell or a coarser segment holding it, for this action or any', () => {
    const seg = { region: 'old-town', device: 'web' };
    expect(findingsForCell(report, seg, 'old-town · web', 'bakery').map((f) => f.check)).toEqual(['propensity.exploration']);
    expect(findingsForCell(report, seg, 'old-town · web', 'household').map((f) => f.check)).toEqual(['propensity.exploration', 'support.floor']);
  });

  it('quotes identifiers and values in the cell SQL', () => {
    expect(cellSql(report, { region: "o'town" }, 'bakery')).toBe(`SELECT *\nFROM log\nWHERE "region" = 'o''town'\n  AND "promotion" = 'bakery'`);
  });
});
