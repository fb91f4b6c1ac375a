import { useEffect, useRef } from 'react';
import * as echarts from 'echarts';

interface Props {
  readonly option: echarts.EChartsCoreOption;
  readonly height?: number;
  readonly label: string;
  readonly onCellClick?: (data: unknown) => void;
}

/** Draws an option built by app/charts; it never shapes data itself (STYLE.md §3). */
export function EChart({ option, height = 320, label, onCellClick }: Props) {
  const element = useRef<HTMLDivElement>(null);
  const chart = useRef<echarts.ECharts | null>(null);

  useEffect(() => {
    if (!element.current) return;
    const instance = echarts.init(element.current, undefined, { renderer: 'svg' });
    chart.current = instance;
    const observer = new ResizeObserver(() => instance.resize());
    observer.observe(element.current);
    return () => { observer.disconnect(); instance.dispose(); chart.current = null; };
  }, []);

  useEffect(() => {
    const instance = chart.current;
    if (!instance) return;
    const kept = scrolledWindow(instance, option);
    instance.setOption(option, true);
    // a new option (a cell chosen, another layer) keeps the rows the reader had scrolled to
    if (kept) instance.dispatchAction({ type: 'dataZoom', dataZoomIndex: 0, start: kept.start, end: kept.end });
  }, [option]);

  useEffect(() => {
    const instance = chart.current;
    if (!instance || !onCellClick) return;
    const handler = (params: { data?: unknown }) => onCellClick(params.data);
    instance.on('click', handler);
    return () => { if (!instance.isDisposed()) instance.off('click', handler); };
  }, [onCellClick]);

  return <div ref={element} className="chart" role="img" aria-label={label} style={{ height }} />;
}

type Zoomed = { dataZoom?: { start?: number; end?: number }[]; yAxis?: { data?: unknown[] }[] };

/** The scrolled window of a chart whose rows scroll (a dataZoom), when the new option has the same rows. */
function scrolledWindow(instance: echarts.ECharts, next: echarts.EChartsCoreOption): { start: number; end: number } | null {
  const nextZoom = (next as { dataZoom?: unknown }).dataZoom;
  if (!Array.isArray(nextZoom) || nextZoom.length === 0) return null;
  const now = instance.getOption() as Zoomed | undefined;
  const zoom = now?.dataZoom?.[0];
  const rowsNow = now?.yAxis?.[0]?.data?.length;
  const nextY = (next as { yAxis?: unknown }).yAxis;
  const rowsNext = Array.isArray(nextY) ? (nextY[0] as { data?: unknown[] } | undefined)?.data?.length : (nextY as { data?: unknown[] } | undefined)?.data?.length;
  if (!zoom || zoom.start === undefined || zoom.end === undefined || rowsNow === undefined || rowsNow !== rowsNext) return null;
  return { start: zoom.start, end: zoom.end };
}
