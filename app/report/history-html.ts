/** The self-contained HTML history of a folder of reports: one printable file, no network, every value escaped. */
import { historyEstimateOption, historySegmentsHeight, historySegmentsOption, historyWeightsOption } from '../charts/history.ts';
import type { History } from '../core/compare/history.ts';
import { fmtNumber, fmtSegment, withTimesInWords } from './format.ts';
import { makeChart, type HtmlOptions } from './html-chart.ts';
import { html, reportPage, type SafeHtml } from './html-template.ts';

const MAX_ROWS = 400;

function status(s: string | null | undefined): SafeHtml {
  return s ? html`<span class="status status-${s}">${s}</span>` : html`<span class="muted">—</span>`;
}

const TARGET_CHART_HEIGHT = 300;

export function renderHistoryHtml(h: History, options: HtmlOptions = {}): string {
  const chart = makeChart(options);
  const labels = h.entries.map((e) => e.label);
  const head = html`<tr><th></th>${h.entries.map((e) => html`<th>${e.label}<br><span class="muted small">${e.span ? `${e.span.from.slice(0, 10)} – ${e.span.to.slice(0, 10)}` : withTimesInWords(e.started_at)}</span></th>`)}</tr>`;
  const body = html`
<header><h1>Counterweight audit history</h1><p class="meta">${fmtNumber(h.entries.length)} reports, oldest log first · ${h.schema}</p></header>
<h2 id="verdicts">Verdict</h2>
<table><thead>${head}</thead><tbody>
<tr><td>verdict</td>${h.entries.map((e) => html`<td>${e.verdict}</td>`)}</tr>
<tr><td>rows</td>${h.entries.map((e) => html`<td class="num">${fmtNumber(e.rows)}</td>`)}</tr>
</tbody></table>
<h2 id="checks">Checks</h2>
<table><thead>${head}</thead><tbody>${h.checks.map((c) => html`<tr><td>${c.title} <code>${c.id}</code></td>${c.statuses.map((s) => html`<td>${status(s)}</td>`)}</tr>`)}</tbody></table>
<h2 id="targets">Targets</h2>
${h.targets.map((t) => html`<h3>${t.name}</h3>
${chart(historyEstimateOption(labels, t), TARGET_CHART_HEIGHT, `${t.name}: estimated value over time`)}
${chart(historyWeightsOption(labels, t), TARGET_CHART_HEIGHT, `${t.name}: weights and support over time`)}
<table><thead>${head}</thead><tbody>
<tr><td>ESS</td>${t.ess.map((v) => html`<td class="num">${fmtNumber(v)}</td>`)}</tr>
<tr><td>ESS / n</td>${t.ess_fraction.map((v) => html`<td class="num">${fmtNumber(v)}</td>`)}</tr>
<tr><td>k̂</td>${t.khat.map((v) => html`<td class="num">${fmtNumber(v)}</td>`)}</tr>
<tr><td>support deficit</td>${t.support_deficit.map((v) => html`<td class="num">${fmtNumber(v)}</td>`)}</tr>
<tr><td>SNIPS [95% CI]</td>${t.snips.map((v, i) => html`<td class="num">${fmtNumber(v)} [${fmtNumber(t.snips_ci_low[i])}, ${fmtNumber(t.snips_ci_high[i])}]</td>`)}</tr>
</tbody></table>`)}
<h2 id="segments">Segment readiness</h2>
${chart(historySegmentsOption(labels, h.segments.slice(0, MAX_ROWS)), historySegmentsHeight(Math.min(h.segments.length, MAX_ROWS)), 'Segment readiness over time')}
<table><thead>${head}</thead><tbody>${h.segments.slice(0, MAX_ROWS).map((s) => html`<tr><td>${fmtSegment(s.segment)}</td>${s.statuses.map((st) => html`<td>${status(st)}</td>`)}</tr>`)}</tbody></table>
<h2 id="findings">Findings: First seen</h2>
<table><thead><tr><th>Check</th><th>Where</th><th>First seen</th><th>Last seen</th>${h.entries.map((e) => html`<th>${e.label}</th>`)}</tr></thead><tbody>
${h.findings.slice(0, MAX_ROWS).map((f) => html`<tr><td><code>${f.check}</code>${f.scope ? html`<br><span class="muted small">by ${f.scope}</span>` : ''}</td><td>${fmtSegment(f.segment)}${f.action !== undefined ? html`<br>action ${f.action}` : ''}${f.target !== undefined ? html`<br>target ${f.target}` : ''}</td>
<td>${h.entries[f.first]?.label}</td><td>${h.entries[f.last]?.label}</td>${f.seen.map((s) => html`<td>${status(s)}</td>`)}</tr>`)}
</tbody></table>
${h.findings.length > MAX_ROWS ? html`<p class="muted">${fmtNumber(h.findings.length - MAX_ROWS)} more findings in the JSON history.</p>` : ''}`;
  return reportPage('Counterweight audit history', body);
}
