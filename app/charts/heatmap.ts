import type { ChartOption, ChartSeries } from './types.ts';
import { baseOption, categoryLabels, seriesTitle } from './base.ts';
import { SEQUENTIAL_RAMP } from './palette.ts';

/**
 * Segments × actions: y holds the segment labels, x the actions, values[i][j] the cell for (y[i], x[j]).
 * Each cell prints its value, so the map reads without colour; empty cells (null) are left blank.
 */
export function heatmapOption(series: ChartSeries): ChartOption {
  const ys = series.y ?? series.values.map((_, i) => String(i + 1));
  const data: [number, number, number | null][] = [];
  let min = Infinity;
  let max = -Infinity;
  series.values.forEach((row, i) => {
    series.x.forEach((_, j) => {
      const v = row[j];
      const value = v === undefined || v === null || !Number.isFinite(v) ? null : v;
      if (value !== null) { min = Math.min(min, value); max = Math.max(max, value); }
      data.push([j, i, value]);
    });
  });
  if (!Number.isFinite(min)) { min = 0; max = 1; }
  if (min === max) max = min + 1;
  const cellLabels = series.x.length * ys.length <= 800;
  return {
    ...baseOption(seriesTitle(series)),
    grid: { left: 140, right: 24, top: 48, bottom: 96, containLabel: true },
    xAxis: { type: 'category', data: categoryLabels(series.x), axisLabel: { rotate: 30, interval: 0 }, splitArea: { show: true } },
    yAxis: { type: 'category', data: categoryLabels(ys), axisLabel: { interval: 0 }, splitArea: { show: true } },
    visualMap: { min, max, calculable: false, orient: 'horizontal', left: 'center', bottom: 0, inRange: { color: [...SEQUENTIAL_RAMP] }, text: [formatValue(max), formatValue(min)] },
    series: [{
      type: 'heatmap',
      name: series.name,
      data,
      label: { show: cellLabels, fontSize: ys.length > 40 ? 8 : 9, formatter: (p: { value: [number, number, number | null] }) => formatValue(p.value[2]) },
      itemStyle: { borderColor: '#ffffff', borderWidth: 1 },
    }],
  };
}

function formatValue(v: number | null): string {
  if (v === null) return '';
  if (v !== 0 && Math.abs(v) < 0.01) return v.toExponential(1);
  return Number.isInteger(v) ? String(v) : v.toFixed(2);
}
