import type { ChartOption, ChartTarget } from './types.ts';
import { baseOption } from './base.ts';
import { seriesColour } from './palette.ts';

const ESTIMATORS = ['ips', 'snips', 'dr'] as const;
const ESTIMATOR_NAMES: Record<(typeof ESTIMATORS)[number], string> = { ips: 'IPS', snips: 'SNIPS', dr: 'DR' };
/** Where each estimator sits within its target's slot, in category widths: side by side, never at one x. */
export const ESTIMATOR_OFFSETS: readonly number[] = [-0.22, 0, 0.22];

/**
 * Estimates with 95% intervals per target, the three estimators side by side within each target's slot.
 * The targets are a category axis; points and intervals are drawn on a hidden value axis over the same
 * range (target i at x = i), so each estimator can be shifted within the slot. An interval is a markLine
 * from (x, low) to (x, high): no custom render code, so it renders server-side too.
 */
export function estimatesOption(targets: readonly ChartTarget[], onPolicy?: number | null): ChartOption {
  const categories = targets.map((t) => t.name);
  const series: Record<string, unknown>[] = ESTIMATORS.map((key, k) => {
    const colour = seriesColour(k);
    const x = (i: number) => i + (ESTIMATOR_OFFSETS[k] ?? 0);
    const intervals = targets.flatMap((t, i) => {
      const lo = finite(t[key].ci_low);
      const hi = finite(t[key].ci_high);
      return lo === null || hi === null ? [] : [[{ coord: [x(i), lo] }, { coord: [x(i), hi] }]];
    });
    return {
      type: 'scatter', name: ESTIMATOR_NAMES[key], xAxisIndex: 1, color: colour, symbol: ['circle', 'diamond', 'triangle'][k], symbolSize: 9,
      data: targets.flatMap((t, i) => { const v = finite(t[key].value); return v === null ? [] : [[x(i), v]]; }),
      markLine: { symbol: 'none', silent: true, label: { show: false }, lineStyle: { color: colour, width: 3, opacity: 0.6, type: 'solid' }, data: intervals },
    };
  });
  if (onPolicy !== undefined && onPolicy !== null && Number.isFinite(onPolicy)) {
    series.push({
      type: 'line', name: 'logging policy', xAxisIndex: 1, data: [], silent: true,
      markLine: { symbol: 'none', silent: true, lineStyle: { type: 'dashed', color: '#444444' }, label: { formatter: 'logging policy', position: 'insideEndTop' }, data: [{ yAxis: onPolicy }] },
    });
  }
  return {
    ...baseOption('Estimated value by target (95% CI)'),
    legend: { data: ESTIMATORS.map((k) => ESTIMATOR_NAMES[k]), bottom: 0 },
    xAxis: [
      { type: 'category', data: categories, axisLabel: { interval: 0, rotate: categories.length > 5 ? 30 : 0 } },
      { type: 'value', min: -0.5, max: categories.length - 0.5, show: false },
    ],
    // markLines do not widen an axis: its range is set to hold every interval and the logging policy's value
    yAxis: { type: 'value', ...valueRange(targets, onPolicy), axisLine: { onZero: false } },
    series,
  };
}

function valueRange(targets: readonly ChartTarget[], onPolicy?: number | null): { min?: number; max?: number } {
  const all = targets.flatMap((t) => ESTIMATORS.flatMap((k) => [t[k].value, t[k].ci_low, t[k].ci_high])).concat(onPolicy ?? null).map(finite).filter((v): v is number => v !== null);
  if (all.length === 0) return {};
  const lo = Math.min(...all);
  const hi = Math.max(...all);
  const pad = (hi - lo || Math.abs(hi) || 1) * 0.08;
  const round = (v: number) => Number(v.toPrecision(3));
  return { min: round(lo - pad), max: round(hi + pad) };
}

function finite(v: number | null): number | null {
  return v === null || !Number.isFinite(v) ? null : v;
}
