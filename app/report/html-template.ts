import { escapeHtml } from './escape.ts';
import { REPORT_CSP, REPORT_CSS } from './html-style.ts';

/** Markup that is already safe. Only this module's `html` tag and `trustedSvg` make one. */
export class SafeHtml {
  constructor(readonly value: string) {}
  toString(): string {
    return this.value;
  }
}

type Interpolation = SafeHtml | string | number | boolean | null | undefined | readonly Interpolation[];

function render(value: Interpolation): string {
  if (value instanceof SafeHtml) return value.value;
  if (Array.isArray(value)) return value.map(render).join('');
  if (value === null || value === undefined || value === false) return '';
  return escapeHtml(value);
}

/** Template tag: every interpolated value is escaped unless it is SafeHtml (from this tag). */
export function html(strings: TemplateStringsArray, ...values: Interpolation[]): SafeHtml {
  let out = strings[0] ?? '';
  values.forEach((v, i) => { out += render(v) + (strings[i + 1] ?? ''); });
  return new SafeHtml(out);
}

const ACTIVE_SVG = /<script|<foreignObject|<iframe|<[^>]*\son[a-z]+\s*=|<[^>]*javascript:|<[^>]*\shref\s*=\s*["']?(?!#)/i;

/**
 * ECharts' SVG renderer escapes text content itself (zrender's encodeHTML over & < > " '). This is the
 * second line: an SVG with anything active in it (script, foreign content, event attributes, external
 * links) is not embedded at all.
 */
export function trustedSvg(svg: string): SafeHtml | null {
  return ACTIVE_SVG.test(svg) ? null : new SafeHtml(svg);
}

/** One self-contained page: the reports' CSP (no script, no fetch), their stylesheet (and `css`), the title escaped. */
export function reportPage(title: string, body: SafeHtml, css = ''): string {
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${REPORT_CSP}">
<meta name="referrer" content="no-referrer">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)}</title>
<style>${REPORT_CSS}${css}</style>
</head>
<body>
${body.value}
</body>
</html>
`;
}
