import type { ChartOption, ChartSeries } from './types.ts';
import { SERIES_COLOURS } from './palette.ts';

export const FONT = 'system-ui, -apple-system, "Segoe UI", Roboto, sans-serif';

export function seriesTitle(series: ChartSeries): string {
  return series.unit ? `${series.name} (${series.unit})` : series.name;
}

/** Shared frame: no animation (SSR and print), accessible description, our palette. */
export function baseOption(title: string): ChartOption {
  return {
    animation: false,
    color: [...SERIES_COLOURS],
    aria: { enabled: true },
    textStyle: { fontFamily: FONT, fontSize: 12, color: '#222222' },
    title: { text: title, left: 'left', textStyle: { fontSize: 13, fontWeight: 'bold' } },
    grid: { left: 64, right: 24, top: 48, bottom: 64, containLabel: true },
  };
}

export function categoryLabels(values: readonly (string | number)[]): string[] {
  return values.map((v) => String(v));
}

export function rowOf(series: ChartSeries, index: number): (number | null)[] {
  const row = series.values[index] ?? [];
  return series.x.map((_, j) => {
    const v = row[j];
    return v === undefined || v === null || !Number.isFinite(v) ? null : v;
  });
}

export function labelOf(series: ChartSeries, index: number): string {
  return series.labels?.[index] ?? (series.values.length > 1 ? `${series.name} ${index + 1}` : series.name);
}

export function legendFor(names: readonly string[]): ChartOption | undefined {
  return names.length > 1 ? { data: [...names], bottom: 0, type: 'scroll' } : undefined;
}
