/**
 * The weight-cap trade-off of one target (remedies.caps): the clipped estimate with its 95% interval (dotted
 * bounds) on the left axis and the bound on the bias the cap introduces on the right, both against the cap on a
 * log axis, so a reader sees the interval narrow as the bias bound grows; the cap that minimises the stated MSE
 * bound is marked (it may lie between the grid's caps).
 */
import type { ChartCap, ChartOption } from './types.ts';
import { baseOption } from './base.ts';
import { OKABE_ITO, seriesColour } from './palette.ts';

/** Caps printed as the axis shows them: three significant digits. */
export function capLabel(cap: number): string {
  return Number(cap.toPrecision(3)).toLocaleString('en');
}

const finite = (v: number | null): number | null => (v === null || !Number.isFinite(v) ? null : v);

export function capsOption(target: string, caps: readonly ChartCap[], best: ChartCap | null): ChartOption {
  const points = [...caps, ...(best && !caps.some((c) => c.cap === best.cap) ? [best] : [])].sort((a, b) => a.cap - b.cap);
  const at = (f: (c: ChartCap) => number | null) => points.map((c) => [c.cap, f(c)]);
  const colour = seriesColour(0);
  const bound = { type: 'line', symbol: 'none', silent: true, color: colour, lineStyle: { type: 'dotted', width: 1.5 } };
  return {
    ...baseOption(`${target}: capped estimate (95% CI) and its bias bound, by cap`),
    legend: { data: ['capped IPS', '95% CI', 'bias bound'], bottom: 0 },
    xAxis: { type: 'log', min: 'dataMin', max: 'dataMax', name: 'cap M on the weights (log scale)', nameLocation: 'middle', nameGap: 28, axisLabel: { formatter: (v: number) => capLabel(v) } },
    yAxis: [
      { type: 'value', scale: true, name: 'estimate' },
      { type: 'value', name: 'bias bound', min: 0, splitLine: { show: false } },
    ],
    series: [
      { ...bound, name: '95% CI', data: at((c) => finite(c.estimate.ci_low)) },
      { ...bound, name: '95% CI', data: at((c) => finite(c.estimate.ci_high)) },
      {
        type: 'line', name: 'capped IPS', data: at((c) => finite(c.estimate.value)), color: colour, symbolSize: 6, lineStyle: { width: 2 },
        ...(best ? {
          markLine: { symbol: 'none', silent: true, lineStyle: { color: OKABE_ITO.black, type: 'dashed' }, label: { formatter: `least MSE bound, M = ${capLabel(best.cap)}`, position: 'insideEndTop' }, data: [{ xAxis: best.cap }] },
        } : {}),
      },
      { type: 'line', name: 'bias bound', yAxisIndex: 1, data: at((c) => finite(c.bias_bound)), color: OKABE_ITO.vermillion, symbol: 'diamond', symbolSize: 7, lineStyle: { type: 'dashed', width: 2 } },
    ],
  };
}
