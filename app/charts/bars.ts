import type { ChartOption, ChartSeries } from './types.ts';
import { baseOption, categoryLabels, labelOf, legendFor, rowOf, seriesTitle } from './base.ts';
import { timeMarks } from './lines.ts';

/**
 * Bars: x categories, one bar series per values row (labels name the rows). More than three rows (e.g. an
 * action mix per time bucket) are stacked, which reads better than a comb of thin grouped bars.
 */
/** Series ranked rather than ordered: one row over many categories (segments), drawn as sorted horizontal bars. */
const RANKED = /^ESS by segment/;

/** Horizontal bars, smallest first at the top, so the segments that limit an estimate lead and every label reads. */
function rankedOption(series: ChartSeries): ChartOption {
  const row = rowOf(series, 0);
  const order = series.x.map((x, j) => ({ x: String(x), v: row[j] ?? null })).sort((a, b) => (a.v ?? Infinity) - (b.v ?? Infinity) || (a.x < b.x ? -1 : 1));
  return {
    ...baseOption(seriesTitle(series)),
    grid: { left: 16, right: 56, top: 48, bottom: 32, containLabel: true },
    yAxis: { type: 'category', data: order.map((o) => o.x), inverse: true, axisLabel: { interval: 0, fontSize: 10 } },
    xAxis: { type: 'value', name: series.unit ?? '' },
    series: [{ type: 'bar', name: labelOf(series, 0), data: order.map((o) => o.v), label: { show: true, position: 'right', fontSize: 9 } }],
  };
}

/** Height for ranked bars: one readable row per category. */
export function rankedHeight(series: ChartSeries): number | null {
  return RANKED.test(series.name) && series.values.length === 1 ? 90 + 16 * series.x.length : null;
}

export function barsOption(series: ChartSeries): ChartOption {
  if (RANKED.test(series.name) && series.values.length === 1) return rankedOption(series);
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
      ...(i === 0 ? timeMarks(series) : {}),
    })),
  };
}
