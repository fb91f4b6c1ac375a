import type { ChartOption, ChartSeries } from './types.ts';
import { baseOption, categoryLabels, seriesTitle } from './base.ts';
import { SEQUENTIAL_RAMP } from './palette.ts';
import { countText } from '../core/count-words.ts';

/**
 * Segments × actions: y holds the segment labels, x the actions, values[i][j] the cell for (y[i], x[j]).
 * Each cell prints its value, so the map reads without colour; empty cells (null) are left blank.
 */
/** A z map (unit "z") is drawn on a diverging scale centred on 0; a cell with no rows is its own hatched category. */
const isZMap = (series: ChartSeries) => series.unit === 'z';
/** Older reports wrote never-logged cells of the z map as ±99. */
const NEVER_LOGGED_SENTINEL = 99;
/** Diverging ramp ColorBrewer "RdBu" (Brewer, colorbrewer2.org), 7 classes: red below 0, blue above, white at 0. */
export const DIVERGING_RAMP: readonly string[] = ['#b2182b', '#ef8a62', '#fddbc7', '#f7f7f7', '#d1e5f0', '#67a9cf', '#2166ac'];
const HATCH = { symbol: 'rect', symbolSize: 1, dashArrayX: [1, 0], dashArrayY: [2, 4], rotation: -Math.PI / 4, color: '#5c6167' };

function zMapOption(series: ChartSeries): ChartOption {
  const ys = series.y ?? series.values.map((_, i) => String(i + 1));
  const data: [number, number, number][] = [];
  const never: [number, number, number][] = [];
  let extent = 0;
  series.values.forEach((row, i) => {
    series.x.forEach((_, j) => {
      const v = row[j];
      if (v === undefined || v === null || !Number.isFinite(v) || Math.abs(v) >= NEVER_LOGGED_SENTINEL) never.push([j, i, 0]);
      else { data.push([j, i, v]); extent = Math.max(extent, Math.abs(v)); }
    });
  });
  const bound = Math.max(3, Math.ceil(Math.min(extent, 20)));
  const cellLabels = series.x.length * ys.length <= 800;
  return {
    ...baseOption(seriesTitle(series)),
    grid: { left: 8, right: 24, top: 48, bottom: 110, containLabel: true },
    legend: { data: ['never logged'], bottom: 0, right: 8, selectedMode: false },
    xAxis: actionAxes(series),
    yAxis: segmentAxis(series, ys),
    visualMap: [
      { type: 'continuous', seriesIndex: 0, min: -bound, max: bound, calculable: false, orient: 'horizontal', left: 'center', bottom: 24, inRange: { color: [...DIVERGING_RAMP] }, text: [`z ≥ +${bound} (more weight than expected)`, `z ≤ −${bound} (less)`] },
      overlayColour(1, NEVER_LOGGED_FILL),
    ],
    series: [
      {
        type: 'heatmap', name: series.name, data,
        label: { show: cellLabels, fontSize: ys.length > 40 ? 8 : 9, formatter: (p: { value: [number, number, number] }) => heatCellText(p.value[2]) },
        itemStyle: { borderColor: '#ffffff', borderWidth: 1 },
      },
      neverLogged(never),
    ],
    aria: { enabled: true, decal: { show: false } },
  };
}

/**
 * The actions, named under the map and again over it: a map of dozens of segment rows is taller than a screen,
 * and a reader in its middle or at its top must still see which column is which action. The cells are drawn
 * on the first axis; the second repeats its labels.
 */
function actionAxes(series: ChartSeries): Record<string, unknown>[] {
  const axis = { type: 'category', data: categoryLabels(series.x), axisLabel: { rotate: 30, interval: 0 }, splitArea: { show: true } };
  return [{ ...axis, position: 'bottom' }, { ...axis, position: 'top', splitArea: { show: false } }];
}

/** Segment rows a map shows at once on a page before its rows scroll (withRowWindow). */
export const MAP_WINDOW_ROWS = 30;

/**
 * A map of more than `rows` segment rows, for a page: it shows `rows` of them at a time, with a scroll bar
 * beside the map and the mouse wheel moving through them, so the action names above and below stay on screen.
 * The HTML report, a printed page, draws every row (heatmapOption alone).
 */
export function withRowWindow(option: ChartOption, segmentRows: number, rows = MAP_WINDOW_ROWS): ChartOption {
  if (segmentRows <= rows) return option;
  const grid = (option.grid ?? {}) as Record<string, unknown>;
  return {
    ...option,
    grid: { ...grid, right: 44 },
    dataZoom: [
      { type: 'slider', yAxisIndex: 0, startValue: 0, endValue: rows - 1, zoomLock: true, showDetail: false, brushSelect: false, showDataShadow: false, right: 8, width: 18, filterMode: 'empty' },
      { type: 'inside', yAxisIndex: 0, zoomOnMouseWheel: false, moveOnMouseWheel: true, moveOnMouseMove: false, filterMode: 'empty' },
    ],
  };
}

/** Height of a map drawn by withRowWindow: `rows` rows at most, as chartHeight counts them. */
export function windowedMapHeight(segmentRows: number, rows = MAP_WINDOW_ROWS): number {
  return 210 + 18 * Math.min(segmentRows, rows);
}

/**
 * The segment axis, first row at the top as in the table beside the map (one order in chart and table); a
 * row with a note ("not explored") says so after its label, in bold.
 */
function segmentAxis(series: ChartSeries, ys: readonly (string | number)[]): Record<string, unknown> {
  const notes = series.row_notes ?? [];
  return {
    type: 'category', inverse: true, splitArea: { show: true },
    data: categoryLabels(ys).map((label, i) => {
      const note = notes[i];
      return note ? { value: `${label} — ${note}`, textStyle: { fontWeight: 'bold', color: '#000000' } } : label;
    }),
    axisLabel: { interval: 0 },
  };
}

/** The chosen cell (its column and row) outlined in black over the map. */
export function withSelectedCell(option: ChartOption, cell: { readonly col: number; readonly row: number } | null): ChartOption {
  if (!cell || !Array.isArray(option.series)) return option;
  const clear = 'rgba(0,0,0,0)';
  const outline = { type: 'heatmap', name: 'selected cell', data: [[cell.col, cell.row, 0]], silent: true, itemStyle: { color: clear, borderColor: '#000000', borderWidth: 3 }, label: { show: false }, z: 10 };
  const maps = option.visualMap === undefined ? [] : Array.isArray(option.visualMap) ? option.visualMap : [option.visualMap];
  return { ...option, series: [...(option.series as unknown[]), outline], visualMap: [...maps, overlayColour(option.series.length, clear)] };
}

/** Fill of a never-logged cell, under its hatching. */
const NEVER_LOGGED_FILL = '#ffffff';

/**
 * ECharts draws a heatmap series only under a visual map (its development build throws "Heatmap must use
 * with visualMap" otherwise), so each overlay series (never-logged cells, the selected cell) gets a hidden
 * one that paints every value in its own single colour.
 */
function overlayColour(seriesIndex: number, color: string): Record<string, unknown> {
  return { type: 'continuous', show: false, seriesIndex, min: 0, max: 1, inRange: { color: [color, color] } };
}

export function heatmapOption(series: ChartSeries): ChartOption {
  if (isZMap(series)) return zMapOption(series);
  const ys = series.y ?? series.values.map((_, i) => String(i + 1));
  const data: [number, number, number | null][] = [];
  const never: [number, number, number][] = [];
  let min = Infinity;
  let max = -Infinity;
  series.values.forEach((row, i) => {
    series.x.forEach((_, j) => {
      const v = row[j];
      const value = v === undefined || v === null || !Number.isFinite(v) ? null : v;
      if (value === null && series.null_reasons?.[i]?.[j] === 'never logged') { never.push([j, i, 0]); return; }
      if (value !== null) { min = Math.min(min, value); max = Math.max(max, value); }
      data.push([j, i, value]);
    });
  });
  if (!Number.isFinite(min)) { min = 0; max = 1; }
  if (min === max) max = min + 1;
  const cellLabels = series.x.length * ys.length <= 800;
  const scale = { seriesIndex: 0, min, max, calculable: false, orient: 'horizontal', left: 'center', bottom: 0, inRange: { color: [...SEQUENTIAL_RAMP] }, text: [heatCellText(max), heatCellText(min)] };
  return {
    ...baseOption(seriesTitle(series)),
    grid: { left: 8, right: 24, top: 48, bottom: 96, containLabel: true },
    xAxis: actionAxes(series),
    yAxis: segmentAxis(series, ys),
    ...(never.length ? { legend: { data: ['never logged'], bottom: 0, right: 8, selectedMode: false } } : {}),
    visualMap: never.length ? [scale, overlayColour(1, NEVER_LOGGED_FILL)] : scale,
    series: [{
      type: 'heatmap',
      name: series.name,
      data,
      label: { show: cellLabels, fontSize: ys.length > 40 ? 8 : 9, formatter: (p: { value: [number, number, number | null] }) => heatCellText(p.value[2]) },
      itemStyle: { borderColor: '#ffffff', borderWidth: 1 },
    }, ...(never.length ? [neverLogged(never)] : [])],
    ...(never.length ? { aria: { enabled: true, decal: { show: false } } } : {}),
  };
}

function neverLogged(cells: readonly [number, number, number][]): Record<string, unknown> {
  return { type: 'heatmap', name: 'never logged', data: cells, itemStyle: { color: NEVER_LOGGED_FILL, borderColor: '#ffffff', borderWidth: 1, decal: HATCH }, label: { show: false }, tooltip: { formatter: 'never logged: no rows of this action in this segment' } };
}

/** A map cell's value as the chart prints it; the table view and the cell panel print the same text. */
export function heatCellText(v: number | null): string {
  if (v === null) return '';
  if (v !== 0 && Math.abs(v) < 0.0001) return v.toExponential(1);
  if (v !== 0 && Math.abs(v) < 0.01) return v.toPrecision(2);
  return Number.isInteger(v) ? countText(v) : v.toFixed(2);
}
