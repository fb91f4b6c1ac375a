import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { Series, TargetSummary } from '../../../app/core/model/report.ts';
import { chartForSeries, estimatesOption, heatmapOption, MAP_WINDOW_ROWS, windowedMapHeight, withRowWindow, withSelectedCell, histogramOption, linesOption, OKABE_ITO, SERIES_COLOURS, STATUS_COLOURS, STATUS_LABELS } from '../../../app/charts/index.ts';
import type { ChartHistorySegment, ChartHistoryTarget, ChartSeries, ChartTarget } from '../../../app/charts/types.ts';
import { historyEstimateOption, historySegmentsOption, historyWeightsOption } from '../../../app/charts/history.ts';
import { capsOption } from '../../../app/charts/remedies.ts';
import type { History } from '../../../app/core/compare/history.ts';
import { renderSvg } from '../../../app/report/svg.ts';

// Compile-time: the report model's values fit what the builders read.
const _seriesFits = (s: Series): ChartSeries => s;
const _targetFits = (t: TargetSummary): ChartTarget => t;

type Obj = Record<string, unknown>;
const seriesOf = (o: Obj) => o.series as Obj[];

describe('chart option builders', () => {
  it('use the Okabe–Ito colours (Okabe & Ito 2008: #E69F00 orange, #56B4E9 sky blue, #009E73 bluish green, #0072B2 blue, #D55E00 vermillion, #CC79A7 reddish purple, #F0E442 yellow)', () => {
    expect(new Set(SERIES_COLOURS)).toEqual(new Set(['#000000', '#E69F00', '#56B4E9', '#009E73', '#F0E442', '#0072B2', '#D55E00', '#CC79A7']));
    expect(Object.values(OKABE_ITO)).toHaveLength(8);
    expect(STATUS_COLOURS.fail).toBe('#D55E00');
    for (const status of ['pass', 'warn', 'fail', 'skipped'] as const) expect(STATUS_LABELS[status].text).toMatch(/^[A-Z]+$/);
  });

  it('draw a CI band as a stacked transparent base plus the band height', () => {
    const o = linesOption({ name: 'rate', kind: 'lines', x: ['a', 'b'], values: [[0.5, 0.6], [0.4, 0.45], [0.7, 0.8]], labels: ['rate', 'rate:ci_low', 'rate:ci_high'] });
    const s = seriesOf(o);
    expect(s.map((x) => x.name)).toEqual(['rate 95% CI low', 'rate 95% CI', 'rate']);
    expect(s[0]?.data).toEqual([0.4, 0.45]);
    expect((s[1]?.data as number[]).map((v) => +v.toFixed(10))).toEqual([0.3, 0.35]);
    expect(s[0]?.stack).toBe(s[1]?.stack);
  });

  it('lay a heatmap out as [x index, y index, value] with nulls kept blank', () => {
    const o = heatmapOption({ name: 'min p', kind: 'heatmap', x: ['a1', 'a2'], y: ['s1', 's2'], values: [[0.1, null], [0.2, 0.3]] });
    expect(seriesOf(o)[0]?.data).toEqual([[0, 0, 0.1], [1, 0, null], [0, 1, 0.2], [1, 1, 0.3]]);
    expect((o.visualMap as Obj).min).toBe(0.1);
  });

  it('mark the change point and each policy-version switch on charts over time, only at x values the series has', () => {
    const x = ['2026-03-01', '2026-03-02', '2026-03-03'];
    const marks = [{ x: '2026-03-02', kind: 'policy-switch' as const, label: 'v7 → v8' }, { x: '2026-04-01', kind: 'policy-switch' as const, label: 'v8 → v9' }];
    const line = linesOption({ name: 'reward', kind: 'lines', x, values: [[0.5, 0.5, 0.2]], labels: ['mean'], unit: 'change at 2026-03-03', marks });
    const data = ((seriesOf(line)[0]?.markLine as Obj).data as Obj[]);
    expect(data.map((d) => [d.xAxis, (d.label as Obj).formatter])).toEqual([['2026-03-03', 'change point 2026-03-03'], ['2026-03-02', 'policy v7 → v8']]);
    const mix = chartForSeries({ name: 'mix', kind: 'bars', x, values: [[0.5, 0.4, 0.4], [0.5, 0.6, 0.6]], labels: ['a', 'b'], marks }) as Obj;
    expect(((seriesOf(mix)[0]?.markLine as Obj).data as Obj[]).map((d) => d.xAxis)).toEqual(['2026-03-02']);
    expect(seriesOf(mix)[1]?.markLine).toBeUndefined();
  });

  it('draw a segment map top row first (as its table lists it), never-logged cells hatched, noted rows labelled, the chosen cell outlined', () => {
    const series = { name: 'share', kind: 'heatmap' as const, x: ['a', 'b'], y: ['north', 'south'], values: [[0.5, 0.5], [1, null]], null_reasons: [[null, null], [null, 'never logged']], row_notes: [null, 'not explored'] };
    const o = heatmapOption(series);
    const y = o.yAxis as Obj;
    expect(y.inverse).toBe(true);
    expect((y.data as unknown[])[0]).toBe('north');
    expect(((y.data as Obj[])[1] as Obj).value).toBe('south — not explored');
    const [cells, never] = seriesOf(o);
    expect(cells?.data).toEqual([[0, 0, 0.5], [1, 0, 0.5], [0, 1, 1]]);
    expect(never?.name).toBe('never logged');
    expect(never?.data).toEqual([[1, 1, 0]]);
    const chosen = seriesOf(withSelectedCell(o, { col: 1, row: 0 }));
    expect(chosen.at(-1)?.data).toEqual([[1, 0, 0]]);
    expect(withSelectedCell(o, null)).toBe(o);
  });

  it('name a tall map\'s actions over it and under it, and on a page show 30 of its 60 rows at a time, action names still drawn', () => {
    const ys = Array.from({ length: 60 }, (_, i) => `segment ${i}`);
    const series = { name: 'share', kind: 'heatmap' as const, x: ['late-checkout', 'breakfast', 'upgrade'], y: ys, values: ys.map(() => [0.2, 0.3, 0.5]) };
    const o = heatmapOption(series);
    const axes = o.xAxis as Obj[];
    expect(axes.map((a) => [a.position, a.data])).toEqual([['bottom', series.x], ['top', series.x]]);
    expect(withRowWindow(o, 30)).toBe(o);
    const windowed = withRowWindow(o, 60);
    const [slider] = windowed.dataZoom as Obj[];
    expect([slider?.yAxisIndex, slider?.startValue, slider?.endValue]).toEqual([0, 0, MAP_WINDOW_ROWS - 1]);
    expect(windowedMapHeight(60)).toBe(210 + 18 * MAP_WINDOW_ROWS);
    // drawn: both rows of action names, and only the window's segment labels
    const svg = renderSvg(windowed, 800, windowedMapHeight(60));
    expect(svg.split('>late-checkout<').length - 1).toBe(2);
    expect(svg).toContain('>segment 29<');
    expect(svg).not.toContain('>segment 30<');
  });

  it('label histogram bins by their edges and never pass NaN through', () => {
    const o = histogramOption({ name: 'log10 w', kind: 'histogram', x: [-1, 0, 1], values: [[3, Number.NaN, 5]] });
    expect((o.xAxis as Obj).data).toEqual(['-1 – 0', '0 – 1', '≥ 1']);
    expect(seriesOf(o)[0]?.data).toEqual([3, null, 5]);
  });

  it('return null for an empty series', () => {
    expect(chartForSeries({ name: 'e', kind: 'bars', x: [], values: [] })).toBeNull();
  });

  it('put intervals and points into the estimates chart', () => {
    const t = { name: 'v9', ips: { value: 0.1, ci_low: 0.05, ci_high: 0.15 }, snips: { value: 0.1, ci_low: null, ci_high: null }, dr: { value: null, ci_low: null, ci_high: null } };
    const s = seriesOf(estimatesOption([t, { ...t, name: 'uniform' }], 0.09));
    const intervalsOf = (name: string) => ((s.find((x) => x.name === name)?.markLine as Obj).data as { coord: number[] }[][]);
    // IPS interval 0.05 to 0.15 for each target, drawn at its own x within the target's slot
    expect(intervalsOf('IPS').map((seg) => seg.map((p) => p.coord[1]))).toEqual([[0.05, 0.15], [0.05, 0.15]]);
    expect(intervalsOf('SNIPS')).toEqual([]);
    // side by side: per target, the estimators' x positions differ, and stay inside the target's slot (i ± 0.5)
    const xs = ['IPS', 'SNIPS'].map((name) => (s.find((x) => x.name === name)?.data as number[][]).map((p) => p[0] as number));
    expect(new Set(xs.map((x) => x[0])).size).toBe(2);
    for (const row of xs) row.forEach((x, i) => expect(Math.abs(x - i)).toBeLessThan(0.5));
    expect(s.find((x) => x.name === 'DR')?.data).toEqual([]);
    // the value axis holds every interval and the logging policy's value (markLines do not widen it)
    const y = estimatesOption([t], 0.01).yAxis as { min: number; max: number };
    expect(y.min).toBeLessThan(0.01);
    expect(y.max).toBeGreaterThan(0.15);
  });

  it('render to SVG server-side for every kind', () => {
    const kinds: ChartSeries[] = [
      { name: 'b', kind: 'bars', x: ['a', 'b'], values: [[1, 2]] },
      { name: 'l', kind: 'lines', x: ['a', 'b'], values: [[1, 2]] },
      { name: 'h', kind: 'heatmap', x: ['a', 'b'], y: ['s'], values: [[1, 2]] },
      { name: 'g', kind: 'histogram', x: [0, 1], values: [[1, 2]] },
      { name: 'p', kind: 'points', x: ['a', 'b'], values: [[1, 2]] },
    ];
    for (const s of kinds) {
      const svg = renderSvg(chartForSeries(s) as Obj, 400, 300);
      expect(svg.startsWith('<svg')).toBe(true);
      expect(svg).toContain(`>${s.name}<`);
    }
  });

  it('never import ECharts or platform modules in app/charts (the layer is pure)', () => {
    for (const file of readdirSync('app/charts')) {
      const text = readFileSync(`app/charts/${file}`, 'utf8');
      expect(text, file).not.toMatch(/from\s+['"](echarts|node:|fs|path)/);
    }
  });
});

describe('chart conventions of the core', () => {
  it('bands a single line with rows labelled plainly ci_low / ci_high', () => {
    const o = linesOption({ name: 'reward', kind: 'lines', x: ['a', 'b'], values: [[0.5, 0.6], [0.4, 0.5], [0.6, 0.7]], labels: ['mean', 'ci_low', 'ci_high'] });
    expect(seriesOf(o).map((x) => x.name)).toEqual(['mean 95% CI low', 'mean 95% CI', 'mean']);
  });

  it('stacks more than three bar rows (an action mix) and groups fewer', () => {
    const mix = chartForSeries({ name: 'mix', kind: 'bars', x: ['d1', 'd2'], values: [[0.25, 0.25], [0.25, 0.25], [0.25, 0.25], [0.25, 0.25]], labels: ['a', 'b', 'c', 'd'] }) as Obj;
    expect(seriesOf(mix).every((s) => s.stack === 'all')).toBe(true);
    const two = chartForSeries({ name: 'two', kind: 'bars', x: ['d1'], values: [[1], [2]] }) as Obj;
    expect(seriesOf(two).some((s) => 'stack' in s)).toBe(false);
  });
});

describe('history charts', () => {
  const target = { name: 'uniform', ess: [900, 400], ess_fraction: [0.9, 0.4], khat: [0.2, 0.6], support_deficit: [0, 0.05], snips: [0.3, 0.25], snips_ci_low: [0.28, 0.2], snips_ci_high: [0.32, 0.3] };
  // Compile-time: the history model's rows fit what the builders read.
  const _historyTargetFits = (t: History['targets'][number]): ChartHistoryTarget => t;
  const _historySegmentFits = (s: History['segments'][number]): ChartHistorySegment => s;

  it('draw the estimate with its interval as a band, one slot per report', () => {
    const o = historyEstimateOption(['w1.json', 'w2.json'], target);
    const s = seriesOf(o);
    expect(s.map((x) => x.name)).toEqual(['SNIPS 95% CI low', 'SNIPS 95% CI', 'SNIPS']);
    expect(s[0]?.data).toEqual([0.28, 0.2]);
    expect((s[1]?.data as number[]).map((v) => +v.toFixed(10))).toEqual([0.04, 0.1]);
    expect((o.xAxis as Obj).data).toEqual(['w1.json', 'w2.json']);
    expect((o.xAxis as Obj).boundaryGap).toBe(true);
    expect(seriesOf(historyWeightsOption(['w1.json', 'w2.json'], target)).map((x) => x.data)).toEqual([[0.9, 0.4], [0.2, 0.6], [0, 0.05]]);
  });

  it('colour each segment × report cell by its status, print the status, and leave a missing report blank', () => {
    const o = historySegmentsOption(['w1', 'w2'], [{ segment: { region: 'old-town' }, statuses: ['pass', 'fail'] }, { segment: { region: 'riverside' }, statuses: [null, 'warn'] }]);
    expect(seriesOf(o)[0]?.data).toEqual([[0, 0, 0], [1, 0, 2], [1, 1, 1]]);
    const pieces = (o.visualMap as Obj).pieces as Obj[];
    expect(pieces.map((p) => [p.label, p.color])).toEqual([['PASS', STATUS_COLOURS.pass], ['WARN', STATUS_COLOURS.warn], ['FAIL', STATUS_COLOURS.fail]]);
    const label = (seriesOf(o)[0]?.label as { formatter: (p: { value: number[] }) => string }).formatter;
    expect(label({ value: [1, 0, 2] })).toBe('✕ FAIL');
    expect(renderSvg(o, 600, 300)).toContain('old-town');
  });
});

describe('weight-cap chart', () => {
  const cap = (m: number, value: number, bias: number) => ({ cap: m, estimate: { value, ci_low: value - 0.01, ci_high: value + 0.01 }, bias_bound: bias, ess: 100 * m });
  it('draws estimate, interval bounds and bias bound against the cap on a log axis, with the least-MSE cap added in order and marked', () => {
    const o = capsOption('v9', [cap(2, 0.3, 0.05), cap(10, 0.32, 0.01)], cap(5, 0.31, 0.02));
    expect((o.xAxis as Obj).type).toBe('log');
    const s = seriesOf(o);
    expect(s.map((x) => x.name)).toEqual(['95% CI', '95% CI', 'capped IPS', 'bias bound']);
    expect(s[2]?.data).toEqual([[2, 0.3], [5, 0.31], [10, 0.32]]);
    expect(s[3]?.yAxisIndex).toBe(1);
    expect(s[3]?.data).toEqual([[2, 0.05], [5, 0.02], [10, 0.01]]);
    expect(((s[2]?.markLine as Obj).data as Obj[])[0]).toEqual({ xAxis: 5 });
    expect(renderSvg(o, 600, 300)).toContain('least MSE bound');
  });
});
