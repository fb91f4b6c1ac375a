import type { EChartsCoreOption } from 'echarts';
import { chartForSeries as buildSeries, chartHeight, estimatesOption } from '../app/charts/index.ts';
import type { Series, TargetSummary } from '../app/core/model/report.ts';

/** The app/charts option for a series, or null when it holds nothing to draw (its table is shown). */
export function chartForSeries(series: Series): EChartsCoreOption | null {
  const option = buildSeries(series);
  return option === null ? null : withoutTitle(option);
}

/** The page names each chart in its caption; the option's own title would say it twice. */
function withoutTitle(option: Record<string, unknown>): EChartsCoreOption {
  const title = typeof option.title === 'object' && option.title !== null ? option.title : {};
  const grid = typeof option.grid === 'object' && option.grid !== null ? option.grid : {};
  return { ...option, title: { ...title, show: false }, grid: { ...grid, top: 32 } } as EChartsCoreOption;
}

export function heightForSeries(series: Series): number {
  return chartHeight(series);
}

export function chartForEstimates(targets: readonly TargetSummary[], onPolicy: number | null): EChartsCoreOption {
  return withoutTitle(estimatesOption(targets, onPolicy));
}
