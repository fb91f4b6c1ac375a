/** A chart of a self-contained HTML page: the option rendered to inline SVG, refused if the SVG holds active content. */
import type { ChartOption } from '../charts/types.ts';
import { html, trustedSvg, type SafeHtml } from './html-template.ts';
import { renderSvg } from './svg.ts';

const CHART_WIDTH = 960;

export interface HtmlOptions {
  /** Chart renderer (default: ECharts SSR to SVG); tests may pass a stub. */
  renderChart?: (option: ChartOption, width: number, height: number) => string;
}

export type ChartFn = (option: ChartOption, height: number, caption: string) => SafeHtml;

export function makeChart({ renderChart = renderSvg }: HtmlOptions): ChartFn {
  return (option, height, caption) => {
    let svg: SafeHtml | null;
    try {
      svg = trustedSvg(renderChart(option, CHART_WIDTH, height));
    } catch (error) {
      return html`<p class="muted">Chart “${caption}” could not be drawn: ${(error as Error).message}</p>`;
    }
    if (svg === null) return html`<p class="muted">Chart “${caption}” omitted: its SVG contained active content.</p>`;
    return html`<figure class="chart" aria-label="${caption}">${svg}</figure>`;
  };
}
