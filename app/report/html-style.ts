/** The reports' Content-Security-Policy: no script, no fetch; inline styles and data: images only. */
export const REPORT_CSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:; base-uri 'none'; form-action 'none'";

/** Inline stylesheet of the HTML report (no external resources; the CSP allows inline styles only). */
export const REPORT_CSS = `
:root { --pass: #009E73; --warn: #E69F00; --fail: #D55E00; --skip: #7F7F7F; --ink: #1d1d1f; --muted: #5a5a5f; --rule: #d9d9de; }
* { box-sizing: border-box; }
body { font: 14px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, sans-serif; color: var(--ink); margin: 0 auto; max-width: 1100px; padding: 24px 28px 64px; background: #fff; }
h1 { font-size: 24px; margin: 0 0 4px; }
h2 { font-size: 18px; margin: 32px 0 8px; padding-bottom: 4px; border-bottom: 2px solid var(--rule); }
h3 { font-size: 15px; margin: 24px 0 6px; }
p.meta, .muted { color: var(--muted); margin: 2px 0; }
code, pre { font-family: ui-monospace, SFMono-Regular, Menlo, Consolas, monospace; font-size: 12px; }
pre { background: #f5f5f7; border: 1px solid var(--rule); padding: 8px 10px; overflow-x: auto; white-space: pre-wrap; word-break: break-word; margin: 4px 0; }
table { border-collapse: collapse; width: 100%; margin: 6px 0 12px; font-size: 12.5px; }
th, td { border: 1px solid var(--rule); padding: 4px 6px; text-align: left; vertical-align: top; }
th { background: #f0f0f3; font-weight: 600; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.status { display: inline-block; font-weight: 700; font-size: 11.5px; letter-spacing: .03em; padding: 1px 7px; border-radius: 10px; border: 2px solid; white-space: nowrap; }
.status-pass { color: #00684c; border-color: var(--pass); }
.status-warn { color: #8a5d00; border-color: var(--warn); }
.status-fail { color: #a34400; border-color: var(--fail); }
.status-skipped { color: #555; border-color: var(--skip); }
.status-error { color: #8a3a6b; border-color: #CC79A7; }
.verdict { border: 3px solid; border-radius: 8px; padding: 14px 18px; margin: 18px 0; }
.verdict-supported { border-color: var(--pass); }
.verdict-supported-with-caveats { border-color: var(--warn); }
.verdict-not-supported { border-color: var(--fail); }
.verdict .label { font-size: 22px; font-weight: 800; margin: 0 0 6px; }
.cautions { background: #fbf8ef; border-left: 5px solid var(--warn); padding: 8px 14px; margin: 12px 0; }
.cautions li { margin: 2px 0; }
.check { border-top: 1px solid var(--rule); padding-top: 4px; }
.chart { margin: 8px 0; page-break-inside: avoid; break-inside: avoid; }
.chart svg { max-width: 100%; height: auto; }
.kv td:first-child { width: 28%; font-family: ui-monospace, monospace; font-size: 12px; }
.changed { font-weight: 700; }
.small { font-size: 11.5px; }
.scroll { overflow-x: auto; max-width: 100%; }
table.findings { table-layout: fixed; }
table.findings col.c-status { width: 92px; } table.findings col.c-segment { width: 12%; } table.findings col.c-action { width: 10%; }
table.findings col.c-window { width: 12%; } table.findings col.c-target { width: 7%; }
table.findings td { overflow-wrap: break-word; }
.scroll th, .scroll td { white-space: nowrap; }
nav.toc ol { columns: 2; margin: 4px 0; }
@media print {
  body { max-width: none; padding: 0; font-size: 10pt; }
  nav.toc { display: none; }
  h2 { break-after: avoid; page-break-after: avoid; }
  .verdict, .cautions, .chart, tr { break-inside: avoid; page-break-inside: avoid; }
  th, .status, .verdict, .cautions { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  pre { white-space: pre-wrap; }
  .scroll { overflow: visible; }
  a { color: inherit; text-decoration: none; }
}
`;
