/** Charts that show the finding: a centred diverging z map with never-logged cells apart, ranked ESS bars, a marked change point. */
import { describe, expect, it } from 'vitest';
import { chartForSeries, chartHeight, withSelectedCell } from '../../../app/charts/index.ts';
import { DIVERGING_RAMP } from '../../../app/charts/heatmap.ts';
import { shownStatus, metricWords } from '../../../app/charts/labels.ts';

describe('z map', () => {
  const series = { name: 'balance z by segment and action', kind: 'heatmap' as const, unit: 'z', x: ['a', 'b'], y: ['s1', 's2'], values: [[1.5, -99], [null, -4.2]] };
  const drawn = chartForSeries(series) as { visualMap: { min: number; max: number; inRange: { color: string[] }; seriesIndex: number }[]; series: { type: string; name: string; data: [number, number, number][] }[] };
  const option = { ...drawn, visualMap: drawn.visualMap[0]! };
  it('puts every heatmap series under a visual map (ECharts refuses to draw one without)', () => {
    const covered = new Set(drawn.visualMap.map((m) => m.seriesIndex));
    drawn.series.forEach((s, i) => { if (s.type === 'heatmap') expect(covered.has(i)).toBe(true); });
    const picked = withSelectedCell(drawn, { col: 0, row: 0 }) as typeof drawn;
    const all = new Set(picked.visualMap.map((m) => m.seriesIndex));
    picked.series.forEach((s, i) => { if (s.type === 'heatmap') expect(all.has(i)).toBe(true); });
  });
  it('is centred on 0 on a diverging ramp', () => {
    expect(option.visualMap.min).toBe(-option.visualMap.max);
    expect(option.visualMap.max).toBe(5);
    expect(option.visualMap.inRange.color).toEqual([...DIVERGING_RAMP]);
  });
  it('draws never-logged cells (null, or the old ±99) as their own category, never as a z value', () => {
    expect(option.series[0]?.data.map((d) => d[2])).toEqual([1.5, -4.2]);
    expect(option.series[1]?.name).toBe('never logged');
    expect(option.series[1]?.data.map((d) => [d[0], d[1]])).toEqual([[1, 0], [0, 1]]);
    expect(JSON.stringify(option)).not.toMatch(/99/);
  });
});

describe('ESS by segment', () => {
  it('is a horizontal bar chart sorted smallest first, tall enough for every label', () => {
    const series = { name: 'ESS by segment: uniform', kind: 'bars' as const, unit: 'rows', x: ['b', 'a', 'c'], values: [[30, 500, 2]] };
    const option = chartForSeries(series) as { yAxis: { type: string; data: string[] }; series: { data: number[] }[] };
    expect(option.yAxis.type).toBe('category');
    expect(option.yAxis.data).toEqual(['c', 'b', 'a']);
    expect(option.series[0]?.data).toEqual([2, 30, 500]);
    expect(chartHeight(series)).toBeGreaterThanOrEqual(3 * 16);
  });
});

describe('drift lines', () => {
  it('mark the change point the series names', () => {
    const series = { name: 'reward: x in s', kind: 'lines' as const, unit: 'change at 2026-03-02', x: ['2026-03-01', '2026-03-02', '2026-03-03'], values: [[0.1, 0.2, 0.2], [0.05, 0.1, 0.1], [0.15, 0.3, 0.3]], labels: ['mean', 'ci_low', 'ci_high'] };
    const option = chartForSeries(series) as { series: { markLine?: { data: { xAxis: string }[] } }[] };
    expect(option.series.flatMap((s) => s.markLine?.data ?? []).map((d) => d.xAxis)).toEqual(['2026-03-02']);
  });
});

describe('words', () => {
  it('label every metric key of a report, keyed forms included', () => {
    expect(metricWords('unexplored_share').label).toBe('Rows in unexplored segments');
    expect(metricWords('reward.null_share').label).toBe('Missing reward values');
    expect(metricWords('table:v9.ess').label).toBe('Effective sample size — table:v9');
    expect(metricWords('detectable_difference').label).toMatch(/at 5% two-sided, 80% power/);
  });
  it('show a check that does not apply as not applicable and the preview as informational', () => {
    expect(shownStatus({ id: 'time.coverage', status: 'skipped', summary: 'No time column is mapped.' })).toBe('not-applicable');
    expect(shownStatus({ id: 'drift.reward', status: 'skipped', summary: 'could not run: boom' })).toBe('not-run');
    expect(shownStatus({ id: 'estimate.preview', status: 'pass', summary: '' })).toBe('informational');
    expect(shownStatus({ id: 'estimate.preview', status: 'warn', summary: '' })).toBe('warn');
  });
});
