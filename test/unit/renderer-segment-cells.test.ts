import { describe, expect, it } from 'vitest';
import type { Report, Series } from '../../app/core/model/report.ts';
import { cellSql } from '../../renderer/engine/row-feed.ts';
import { findingsForCell, segmentHeatmaps, segmentOfRow } from '../../renderer/panels/segment-cells.ts';

const finding = (segment: Record<string, string>, action?: string) => ({ segment, ...(action ? { action } : {}), status: 'fail' as const, metrics: {}, message: 'm' });
// A segment value that holds the label separator: only the structured key can tell where one value ends.
const rows: Series = {
  name: 'rows', kind: 'heatmap', x: ['bakery'], y: ['old-town · web', 'north · east · ios'], values: [[3], [4]],
  segment_keys: { axis: 'y', segments: [[{ column: 'region', value: 'old-town' }, { column: 'device', value: 'web' }], [{ column: 'region', value: 'north · east' }, { column: 'device', value: 'ios' }]] },
};
const report = {
  roles: { action: 'promotion', segments: ['region', 'device'] },
  segments: [],
  checks: [
    { id: 'propensity.exploration', title: 'Exploration', findings: [finding({ region: 'old-town', device: 'web' }), finding({ region: 'north · east', device: 'ios' })], series: [rows] },
    { id: 'support.floor', title: 'Floor', findings: [finding({ region: 'old-town' }, 'household'), finding({ region: 'riverside' })], series: [{ name: 'trend', kind: 'lines', x: [1], values: [[1]] }] },
  ],
} as unknown as Report;

describe('segment map cells', () => {
  it('lists only heatmap series', () => {
    expect(segmentHeatmaps(report).map((m) => m.series.name)).toEqual(['rows']);
  });

  it('takes a row\'s segment from the series\' segment keys, not from its label', () => {
    expect(segmentOfRow(rows, 0)).toEqual({ region: 'old-town', device: 'web' });
    expect(segmentOfRow(rows, 1)).toEqual({ region: 'north · east', device: 'ios' });
    expect(segmentOfRow(rows, 2)).toBeNull();
  });

  it('knows no segment for a series without keys (a report written before them)', () => {
    const { segment_keys: _keys, ...old } = rows;
    expect(segmentOfRow(old, 0)).toBeNull();
    expect(findingsForCell(report, null, 'bakery')).toEqual([]);
  });

  it('finds findings about the cell or a coarser segment holding it, for this action or any', () => {
    const seg = { region: 'old-town', device: 'web' };
    expect(findingsForCell(report, seg, 'bakery').map((f) => f.check)).toEqual(['propensity.exploration']);
    expect(findingsForCell(report, seg, 'household').map((f) => f.check)).toEqual(['propensity.exploration', 'support.floor']);
    expect(findingsForCell(report, segmentOfRow(rows, 1), 'bakery').map((f) => f.finding.segment)).toEqual([{ region: 'north · east', device: 'ios' }]);
  });

  it('quotes identifiers and values in the cell SQL', () => {
    expect(cellSql(report, { region: "o'town" }, 'bakery')).toBe(`SELECT *\nFROM log\nWHERE "region" = 'o''town'\n  AND "promotion" = 'bakery'`);
  });
});
