import type { ChartOption, ChartSeries } from './types.ts';
import { barsOption, rankedHeight } from './bars.ts';
import { linesOption } from './lines.ts';
import { heatmapOption } from './heatmap.ts';
export { heatCellText, MAP_WINDOW_ROWS, windowedMapHeight, withRowWindow, withSelectedCell } from './heatmap.ts';
import { histogramOption } from './histogram.ts';
import { pointsOption } from './points.ts';

export type { ChartOption, ChartSeries, ChartTarget } from './types.ts';
export { barsOption, linesOption, heatmapOption, histogramOption, pointsOption };
export { estimatesOption } from './estimates.ts';
export * from './palette.ts';

const BUILDERS: Record<ChartSeries['kind'], (s: ChartSeries) => ChartOption> = {
  bars: barsOption,
  lines: linesOption,
  heatmap: heatmapOption,
  histogram: histogramOption,
  points: pointsOption,
};

/** The option for a check's series, or null when it holds nothing to draw. */
export function chartForSeries(series: ChartSeries): ChartOption | null {
  if (series.x.length === 0 || series.values.length === 0) return null;
  return BUILDERS[series.kind](series);
}

/** Height that fits the chart's categories (heatmaps grow with their segment rows). */
export function chartHeight(series: ChartSeries): number {
  if (series.kind === 'heatmap') return Math.min(1840, 210 + 18 * (series.y?.length ?? series.values.length));
  return rankedHeight(series) ?? 300;
}
export { historyEstimateOption, historySegmentsHeight, historySegmentsOption, historyWeightsOption, segmentName } from './history.ts';
export { capLabel, capsOption } from './remedies.ts';
