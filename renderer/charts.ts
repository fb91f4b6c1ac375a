import type { EChartsCoreOption } from 'echarts';
import { capsOption, chartForSeries as buildSeries, chartHeight, estimatesOption, historyEstimateOption, historySegmentsOption, historyWeightsOption } from '../app/charts/index.ts';
import type { ChartCap, ChartHistorySegment, ChartHistoryTarget } from '../app/charts/types.ts';
import type { Series, TargetSummary } from '../app/core/model/report.ts';
import { bucketLabel, bucketsNeedHour, formatValue } from './format.ts';

/** The app/charts option for a series, or null when it holds nothing to draw (its table is shown). */
export function chartForSeries(series: Series): EChartsCoreOption | null {
  const option = buildSeries(series);
  return option === null ? null : withoutTitle(option);
}

type Obj = Record<string, unknown>;
const isObj = (v: unknown): v is Obj => typeof v === 'object' && v !== null && !Array.isArray(v);
const ISO_TIME = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}/;

/**
 * A time bucket's label: "2 Mar", or "2 Mar 06:00" when the chart's buckets are shorter than a day (some start
 * other than at midnight); UTC, which the chart's caption says.
 */
export function shortTime(label: string, withHour = !label.includes('T00:00:00')): string {
  return bucketLabel(label, withHour);
}

function readableAxis(axis: unknown): unknown {
  if (!isObj(axis) || !Array.isArray(axis.data)) return axis;
  const label = isObj(axis.axisLabel) ? axis.axisLabel : {};
  if (axis.data.every((d) => typeof d === 'string' && ISO_TIME.test(d))) {
    const withHour = bucketsNeedHour(axis.data);
    return { ...axis, axisLabel: { ...label, rotate: 0, hideOverlap: true, interval: 'auto', formatter: (v: string) => shortTime(v, withHour) } };
  }
  // Dozens of segment names cannot all be printed under a bar chart; the table view lists them.
  return axis.data.length > 24 ? { ...axis, axisLabel: { ...label, interval: 'auto', hideOverlap: true } } : axis;
}

function valueOf(p: { value?: unknown }): unknown {
  return Array.isArray(p.value) ? p.value[p.value.length - 1] : p.value;
}

/** Bar labels print the value as the page's tables do, not as a 17-digit float. */
function readableLabels(series: unknown): unknown {
  if (!Array.isArray(series)) return series;
  return series.map((s: unknown) => {
    if (!isObj(s) || s.type !== 'bar' || !isObj(s.label) || s.label.show !== true) return s;
    return { ...s, label: { ...s.label, formatter: (p: { value?: unknown }) => { const v = valueOf(p); return typeof v === 'number' ? formatValue(v) : ''; } } };
  });
}

/**
 * Page-only presentation: the caption above each chart already names it and its unit, so the option's own
 * title and y-axis name would say it twice (and overlap); time buckets are labelled by day, not full ISO text;
 * numbers on bars are shortened as elsewhere on the page.
 */
function withoutTitle(option: Obj): EChartsCoreOption {
  const title = isObj(option.title) ? option.title : {};
  const grid = isObj(option.grid) ? option.grid : {};
  const yAxis = isObj(option.yAxis) ? { ...option.yAxis, name: '' } : option.yAxis;
  return { ...option, title: { ...title, show: false }, grid: { ...grid, top: 24 }, xAxis: readableAxis(option.xAxis), yAxis, series: readableLabels(option.series) } as EChartsCoreOption;
}

export function heightForSeries(series: Series): number {
  return chartHeight(series);
}

export function chartForEstimates(targets: readonly TargetSummary[], onPolicy: number | null): EChartsCoreOption {
  return withoutTitle(estimatesOption(targets, onPolicy));
}

/** A history's charts (app/charts/history.ts), as the HTML history draws them, without the options' own titles. */
export function chartsForHistoryTarget(labels: readonly string[], target: ChartHistoryTarget): { estimate: EChartsCoreOption; weights: EChartsCoreOption } {
  return { estimate: withoutTitle(historyEstimateOption(labels, target)), weights: withoutTitle(historyWeightsOption(labels, target)) };
}

export function chartForHistorySegments(labels: readonly string[], segments: readonly ChartHistorySegment[]): EChartsCoreOption {
  return withoutTitle(historySegmentsOption(labels, segments));
}

/** The weight-cap trade-off of one target (app/charts/remedies.ts). */
export function chartForCaps(target: string, caps: readonly ChartCap[], best: ChartCap | null): EChartsCoreOption {
  return withoutTitle(capsOption(target, caps, best));
}
