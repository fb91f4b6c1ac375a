import type { ChartOption, ChartSeries } from './types.ts';
import { CI_HIGH_SUFFIX, CI_LOW_SUFFIX } from './types.ts';
import { baseOption, categoryLabels, labelOf, legendFor, rowOf, seriesTitle } from './base.ts';
import { seriesColour } from './palette.ts';

/**
 * Lines over x (time buckets or windows). A row labelled "<name>:ci_low" with a row "<name>:ci_high" is
 * drawn as a shaded band around line "<name>": a transparent stacked base at the low bound plus an area of
 * height (high − low), the usual ECharts confidence-band construction. Rows labelled plainly "ci_low" and
 * "ci_high" belong to the first line.
 */
/** A series whose unit says "change at <x>" marks that x with a labelled vertical line. */
export function changePoint(series: ChartSeries): string | null {
  const m = /^change at (.+)$/.exec(series.unit ?? '');
  if (!m) return null;
  const at = m[1] as string;
  return series.x.map(String).includes(at) ? at : null;
}

/**
 * Vertical lines at the series' change point (black, dashed) and at each policy-version switch it marks
 * (blue, dotted, "v7 → v8"), at x values the series has. Shared by line and bar charts over time.
 */
export function timeMarks(series: ChartSeries): Record<string, unknown> {
  const xs = new Set(series.x.map(String));
  const at = changePoint(series);
  const data: Record<string, unknown>[] = [];
  if (at !== null) data.push({ xAxis: at, lineStyle: { color: '#000000', type: 'dashed', width: 1.5 }, label: { formatter: `change point ${at.slice(0, 10)}`, position: 'insideEndTop', color: '#000000' } });
  for (const m of series.marks ?? []) {
    if (m.kind !== 'policy-switch' || !xs.has(String(m.x))) continue;
    data.push({ xAxis: String(m.x), lineStyle: { color: '#0072B2', type: 'dotted', width: 2 }, label: { formatter: `policy ${m.label}`, position: 'insideEndBottom', color: '#0072B2' } });
  }
  return data.length ? { markLine: { symbol: 'none', silent: true, data } } : {};
}

export function linesOption(series: ChartSeries): ChartOption {
  const labels = series.values.map((_, i) => labelOf(series, i));
  const isBound = (l: string) => l.endsWith(CI_LOW_SUFFIX) || l.endsWith(CI_HIGH_SUFFIX) || l === 'ci_low' || l === 'ci_high';
  const lineIndexes = labels.map((l, i) => ({ l, i })).filter(({ l }) => !isBound(l));
  const out: Record<string, unknown>[] = [];
  lineIndexes.forEach(({ l, i }, k) => {
    const colour = seriesColour(k);
    const plain = k === 0 && labels.includes('ci_low') && labels.includes('ci_high');
    const low = plain ? labels.indexOf('ci_low') : labels.indexOf(l + CI_LOW_SUFFIX);
    const high = plain ? labels.indexOf('ci_high') : labels.indexOf(l + CI_HIGH_SUFFIX);
    if (low >= 0 && high >= 0) {
      const lo = rowOf(series, low);
      const hi = rowOf(series, high);
      const stack = `band-${k}`;
      out.push({ type: 'line', name: `${l} 95% CI low`, data: lo, stack, symbol: 'none', lineStyle: { opacity: 0 }, silent: true });
      out.push({
        type: 'line', name: `${l} 95% CI`, stack, symbol: 'none', lineStyle: { opacity: 0 }, silent: true,
        areaStyle: { color: colour, opacity: 0.18 },
        data: hi.map((h, j) => { const b = lo[j]; return h === null || b === null || b === undefined ? null : h - b; }),
      });
    }
    out.push({ type: 'line', name: l, data: rowOf(series, i), color: colour, symbolSize: 5, lineStyle: { width: 2 }, ...(k === 0 ? timeMarks(series) : {}) });
  });
  return {
    ...baseOption(seriesTitle(series)),
    legend: legendFor(lineIndexes.map(({ l }) => l)),
    xAxis: { type: 'category', data: categoryLabels(series.x), boundaryGap: false, axisLabel: { rotate: series.x.length > 10 ? 40 : 0 } },
    yAxis: { type: 'value', name: changePoint(series) ? 'reward' : (series.unit ?? ''), scale: true },
    series: out,
  };
}
