/**
 * Charts of an audit history (reports ordered oldest log first): a target's estimate with its 95% interval,
 * its weight and support figures, and every segment's readiness, each over the reports. The app's History
 * screen and the HTML history draw the same options.
 */
import type { ChartHistorySegment, ChartHistoryTarget, ChartOption } from './types.ts';
import { CI_HIGH_SUFFIX, CI_LOW_SUFFIX } from './types.ts';
import { baseOption } from './base.ts';
import { linesOption } from './lines.ts';
import { STATUS_COLOURS, STATUS_LABELS, type StatusName } from './palette.ts';

const SNIPS = 'SNIPS';

/** Reports are categories, not a time axis: each label sits in its own slot, none at the plot's edge. */
function overReports(option: ChartOption): ChartOption {
  return { ...option, xAxis: { ...(option.xAxis as object), boundaryGap: true, axisLabel: { interval: 0 } }, yAxis: { ...(option.yAxis as object), name: '' } };
}

/** The target's self-normalized estimate per report, its 95% interval drawn as a band. */
export function historyEstimateOption(labels: readonly string[], target: ChartHistoryTarget): ChartOption {
  return overReports(linesOption({
    name: `${target.name}: estimated value over time (SNIPS, 95% CI)`, kind: 'lines', x: labels,
    values: [target.snips, target.snips_ci_low, target.snips_ci_high],
    labels: [SNIPS, SNIPS + CI_LOW_SUFFIX, SNIPS + CI_HIGH_SUFFIX],
  }));
}

/** ESS / n, the tail shape k̂ and the support deficit per report: the figures the deciding checks read. */
export function historyWeightsOption(labels: readonly string[], target: ChartHistoryTarget): ChartOption {
  return overReports(linesOption({
    name: `${target.name}: weights and support over time`, kind: 'lines', x: labels,
    values: [target.ess_fraction, target.khat, target.support_deficit],
    labels: ['ESS / n', 'k̂ (tail shape)', 'support deficit'],
  }));
}

const STATUS_ORDER: readonly StatusName[] = ['pass', 'warn', 'fail', 'error', 'skipped'];
const isStatus = (s: string | null): s is StatusName => s !== null && (STATUS_ORDER as readonly string[]).includes(s);

function cellText(code: number): string {
  const label = STATUS_LABELS[STATUS_ORDER[code] ?? 'skipped'];
  return `${label.icon} ${label.text}`;
}

export function segmentName(segment: Readonly<Record<string, string>>): string {
  const values = Object.values(segment);
  return values.length === 0 ? 'all rows' : values.join(' · ');
}

/** Height that fits one row per segment. */
export function historySegmentsHeight(segments: number): number {
  return Math.min(2400, 150 + 18 * segments);
}

/**
 * Segments (rows) × reports (columns), each cell coloured by the segment's readiness and printed with the
 * status's symbol, so it reads without colour; a report that does not hold the segment leaves the cell blank.
 */
export function historySegmentsOption(labels: readonly string[], segments: readonly ChartHistorySegment[]): ChartOption {
  const data: [number, number, number][] = [];
  segments.forEach((s, i) => {
    s.statuses.forEach((status, j) => {
      if (isStatus(status)) data.push([j, i, STATUS_ORDER.indexOf(status)]);
    });
  });
  const present = STATUS_ORDER.filter((_, k) => data.some((d) => d[2] === k));
  return {
    ...baseOption('Segment readiness over time'),
    grid: { left: 140, right: 24, top: 48, bottom: 72, containLabel: true },
    xAxis: { type: 'category', data: [...labels], position: 'top', axisLabel: { interval: 0 }, splitArea: { show: true } },
    yAxis: { type: 'category', data: segments.map((s) => segmentName(s.segment)), inverse: true, axisLabel: { interval: 0 }, splitArea: { show: true } },
    visualMap: {
      type: 'piecewise', orient: 'horizontal', left: 'center', bottom: 8, selectedMode: false,
      pieces: present.map((status) => ({ value: STATUS_ORDER.indexOf(status), label: STATUS_LABELS[status].text, color: STATUS_COLOURS[status] })),
    },
    series: [{
      type: 'heatmap', name: 'readiness', data,
      label: { show: true, fontSize: 10, color: '#000000', formatter: (p: { value: [number, number, number] }) => cellText(p.value[2]) },
      itemStyle: { borderColor: '#ffffff', borderWidth: 1 },
    }],
  };
}
