import type { ChartOption, ChartSeries } from './types.ts';
import { baseOption, categoryLabels, labelOf, legendFor, rowOf, seriesTitle } from './base.ts';

/**
 * Bars: x categories, one bar series per values row (labels name the rows). More than three rows (e.g. an
 * action mix per time bucket) are stacked, which reads better than a comb of thin grouped bars.
 */
export function barsOption(series: ChartSeries): ChartOption {
  const names = series.values.map((_, i) => labelOf(series, i));
  const manyCategories = series.x.length > 8;
  const stacked = series.values.length > 3;
  return {
    ...baseOption(seriesTitle(series)),
    legend: legendFor(names),
    xAxis: { type: 'category', data: categoryLabels(series.x), axisLabel: { rotate: manyCategories ? 40 : 0, interval: 0 } },
    yAxis: { type: 'value', name: series.unit ?? '' },
    series: series.values.map((_, i) => ({
      type: 'bar',
      name: names[i],
      data: rowOf(series, i),
      ...(stacked ? { stack: 'all' } : {}),
      label: { show: !stacked && series.x.length * series.values.length <= 24, position: 'top', fontSize: 10 },
    })),
  };
}
