import type { ChartOption, ChartSeries } from './types.ts';
import { baseOption, categoryLabels, labelOf, legendFor, rowOf, seriesTitle } from './base.ts';

/** Points over categories (one scatter series per values row). */
export function pointsOption(series: ChartSeries): ChartOption {
  const names = series.values.map((_, i) => labelOf(series, i));
  return {
    ...baseOption(seriesTitle(series)),
    legend: legendFor(names),
    xAxis: { type: 'category', data: categoryLabels(series.x) },
    yAxis: { type: 'value', name: series.unit ?? '', scale: true },
    series: series.values.map((_, i) => ({ type: 'scatter', name: names[i], data: rowOf(series, i), symbolSize: 8 })),
  };
}
