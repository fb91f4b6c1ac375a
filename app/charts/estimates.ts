import type { ChartOption, ChartTarget } from './types.ts';
import { baseOption } from './base.ts';
import { seriesColour } from './palette.ts';

const ESTIMATORS = ['ips', 'snips', 'dr'] as const;
const ESTIMATOR_NAMES: Record<(typeof ESTIMATORS)[number], string> = { ips: 'IPS', snips: 'SNIPS', dr: 'DR' };

/**
 * Estimates with 95% intervals per target: a point per (target, estimator) and the interval as a
 * vertical segment drawn from a transparent stacked base (no custom render code, so it renders server-side).
 */
export function estimatesOption(targets: readonly ChartTarget[], onPolicy?: number | null): ChartOption {
  const categories = targets.map((t) => t.name);
  const series: Record<string, unknown>[] = [];
  ESTIMATORS.forEach((key, k) => {
    const colour = seriesColour(k);
    const lows = targets.map((t) => finite(t[key].ci_low));
    const spans = targets.map((t) => { const lo = finite(t[key].ci_low); const hi = finite(t[key].ci_high); return lo === null || hi === null ? null : hi - lo; });
    series.push({ type: 'bar', stack: `ci-${key}`, data: lows, itemStyle: { color: 'transparent' }, silent: true, barWidth: 3, name: `${ESTIMATOR_NAMES[key]} low` });
    series.push({ type: 'bar', stack: `ci-${key}`, data: spans, itemStyle: { color: colour, opacity: 0.45 }, silent: true, barWidth: 3, name: `${ESTIMATOR_NAMES[key]} 95% CI` });
  });
  ESTIMATORS.forEach((key, k) => {
    series.push({ type: 'scatter', name: ESTIMATOR_NAMES[key], data: targets.map((t) => finite(t[key].value)), color: seriesColour(k), symbol: ['circle', 'diamond', 'triangle'][k], symbolSize: 9 });
  });
  if (onPolicy !== undefined && onPolicy !== null && Number.isFinite(onPolicy)) {
    (series[series.length - 1] as Record<string, unknown>).markLine = {
      symbol: 'none', silent: true, lineStyle: { type: 'dashed', color: '#444444' },
      label: { formatter: 'logging policy', position: 'insideEndTop' }, data: [{ yAxis: onPolicy }],
    };
  }
  return {
    ...baseOption('Estimated value by target (95% CI)'),
    legend: { data: ESTIMATORS.map((k) => ESTIMATOR_NAMES[k]), bottom: 0 },
    xAxis: { type: 'category', data: categories, axisLabel: { interval: 0, rotate: categories.length > 5 ? 30 : 0 } },
    yAxis: { type: 'value', scale: true },
    series,
  };
}

function finite(v: number | null): number | null {
  return v === null || !Number.isFinite(v) ? null : v;
}
