import type { ChartOption, ChartSeries } from './types.ts';
import { baseOption, rowOf, seriesTitle } from './base.ts';
import { OKABE_ITO } from './palette.ts';

/**
 * Histogram, e.g. of log10 of importance weights: x holds the bins' left edges (x.length bins, each up to
 * the next edge), values[0] the counts. Bars touch (no gap) to read as a distribution.
 */
export function histogramOption(series: ChartSeries): ChartOption {
  const counts = rowOf(series, 0);
  const edges = series.x.map((v) => (typeof v === 'number' ? v : Number(v)));
  const labels = edges.map((e, j) => {
    const next = edges[j + 1];
    return next === undefined || !Number.isFinite(next) ? `≥ ${fmt(e)}` : `${fmt(e)} – ${fmt(next)}`;
  });
  return {
    ...baseOption(seriesTitle(series)),
    xAxis: { type: 'category', data: labels, axisLabel: { rotate: labels.length > 8 ? 40 : 0 } },
    yAxis: { type: 'value', name: 'rows' },
    series: [{ type: 'bar', name: series.name, data: counts, barCategoryGap: '0%', color: OKABE_ITO.blue, itemStyle: { borderColor: '#ffffff', borderWidth: 1 } }],
  };
}

function fmt(v: number): string {
  return Number.isFinite(v) ? (Number.isInteger(v) ? String(v) : v.toFixed(2)) : String(v);
}
