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

  useEffect(() => { chart.current?.setOption(option, true); }, [option]);

  useEffect(() => {
    const instance = chart.current;
    if (!instance || !onCellClick) return;
    const handler = (params: { data?: unknown }) => onCellClick(params.data);
    instance.on('click', handler);
    return () => { if (!instance.isDisposed()) instance.off('click', handler); };
  }, [onCellClick]);

  return <div ref={element} className="chart" role="img" aria-label={label} style={{ height }} />;
}
