/** Server-side rendering of an ECharts option to an SVG string (ECharts SSR, SVG renderer, no DOM). */
import * as echarts from 'echarts';
import type { ChartOption } from '../charts/types.ts';

export function renderSvg(option: ChartOption, width: number, height: number): string {
  const chart = echarts.init(null, null, { renderer: 'svg', ssr: true, width, height });
  try {
    chart.setOption(option as echarts.EChartsOption);
    return chart.renderToSVGString();
  } finally {
    chart.dispose();
  }
}
