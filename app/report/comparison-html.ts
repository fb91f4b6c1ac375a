/**
 * The self-contained HTML comparison: one printable file, no network (the audit report's CSP and stylesheet),
 * leading with what makes the two reports incomparable, then what got worse. Every value from a report passes
 * through the `html` tag, which escapes it.
 */
import type { Change, Comparison, EstimateChange, FindingChange, Headline } from '../core/compare/contract.ts';
import { fmtCell, fmtInterval, fmtNumber, fmtSegment, withTimesInWords } from './format.ts';
import { html, reportPage, type SafeHtml } from './html-template.ts';

const MAX_ROWS = 300;

const COMPARISON_CSS = `
.change { display: inline-block; font-weight: 700; font-size: 11.5px; padding: 1px 7px; border-radius: 10px; border: 2px solid var(--rule); white-space: nowrap; }
.change-worse, .change-added.bad { color: #a34400; border-color: var(--fail); }
.change-better { color: #00684c; border-color: var(--pass); }
.issues { border: 2px solid var(--fail); padding: 8px 12px; margin: 12px 0; }
.issues.note { border-color: var(--rule); }
ul.headlines li { margin: 3px 0; }
`;

const CHANGE_WORDS: Record<Change, string> = { same: 'same', worse: 'worse', better: 'better', changed: 'changed', added: 'new', removed: 'gone' };

function change(c: Change): SafeHtml {
  return html`<span class="change change-${c}">${CHANGE_WORDS[c]}</span>`;
}

function status(s: string | null): SafeHtml {
  return s === null ? html`—` : html`<span class="status status-${s}">${s}</span>`;
}

function headlineList(items: readonly Headline[], empty: string): SafeHtml {
  if (items.length === 0) return html`<p class="muted">${empty}</p>`;
  return html`<ul class="headlines">${items.map((h) => html`<li>${h.regression ? html`<strong>Regression:</strong> ` : ''}${withTimesInWords(h.message)}</li>`)}</ul>`;
}

function findingRows(findings: readonly FindingChange[]): SafeHtml {
  const shown = findings.slice(0, MAX_ROWS);
  return html`<table><thead><tr><th>Check</th><th>Where</th><th>Then</th><th>Now</th><th>Size then</th><th>Size now</th><th>What</th></tr></thead><tbody>
${shown.map((f) => html`<tr><td><code>${f.check}</code>${f.scope ? html`<br><span class="muted small">by ${f.scope}</span>` : ''}</td>
<td>${fmtSegment(f.segment)}${f.action !== undefined ? html`<br>action ${f.action}` : ''}${f.target !== undefined ? html`<br>target ${f.target}` : ''}${(f.current ?? f.baseline)?.window ? html`<br><span class="muted small">${(f.current ?? f.baseline)!.window!.from} – ${(f.current ?? f.baseline)!.window!.to}</span>` : ''}</td>
<td>${status(f.baseline?.status ?? null)}</td><td>${status(f.current?.status ?? null)}</td>
<td class="num">${f.size_metric}: ${fmtNumber(f.baseline?.size ?? null)}</td><td class="num">${f.size_metric}: ${fmtNumber(f.current?.size ?? null)}</td>
<td>${withTimesInWords((f.current ?? f.baseline)!.message)}</td></tr>`)}
</tbody></table>${findings.length > shown.length ? html`<p class="muted">${fmtNumber(findings.length - shown.length)} more in the JSON comparison.</p>` : ''}`;
}

function estimateRow(name: string, e: EstimateChange | null): SafeHtml {
  if (!e) return html``;
  return html`<tr><td>${name}</td><td class="num">${fmtNumber(e.baseline.value)} ${fmtInterval(e.baseline.ci_low, e.baseline.ci_high)}</td>
<td class="num">${fmtNumber(e.current.value)} ${fmtInterval(e.current.ci_low, e.current.ci_high)}</td><td class="num">${fmtNumber(e.difference)}</td>
<td class="num">${fmtNumber(e.z)}</td><td class="num">${fmtNumber(e.p_value)}</td><td>${e.differs ? html`<strong>yes</strong>` : 'no'}</td></tr>`;
}

export function renderComparisonHtml(c: Comparison, labels: { baseline: string; current: string }): string {
  const byState = (state: FindingChange['state']) => c.findings.filter((f) => f.state === state && (state !== 'persisting' || f.change !== 'same'));
  const body = html`
<header>
  <h1>Counterweight comparison</h1>
  <p class="meta">Baseline: ${labels.baseline} · ${fmtNumber(c.baseline.rows)} rows · audited ${withTimesInWords(c.baseline.started_at)} by version ${c.baseline.tool_version}${c.baseline.span ? ` · log ${withTimesInWords(`${c.baseline.span.from} to ${c.baseline.span.to}`)}` : ''}</p>
  <p class="meta">Current: ${labels.current} · ${fmtNumber(c.current.rows)} rows · audited ${withTimesInWords(c.current.started_at)} by version ${c.current.tool_version}${c.current.span ? ` · log ${withTimesInWords(`${c.current.span.from} to ${c.current.span.to}`)}` : ''}</p>
  <p class="meta">Comparison schema ${c.schema} · estimates differ when a two-sided z test of their difference has p &lt; ${fmtNumber(c.alpha)}</p>
</header>
${c.issues.length ? html`<section class="issues${c.comparable ? ' note' : ''}" id="comparability"><h2>${c.comparable ? 'Note before reading' : 'These reports are not directly comparable'}</h2><ul>${c.issues.map((i) => html`<li>${withTimesInWords(i.message)}</li>`)}</ul></section>` : ''}
<section id="verdict"><h2>Verdict</h2><p>${c.verdict.baseline} → <strong>${c.verdict.current}</strong> ${change(c.verdict.change)}</p>
<p><strong>${c.regression ? 'Regression: something that decides the verdict got worse.' : 'No regression.'}</strong></p></section>
<section id="worse"><h2>What got worse</h2>${headlineList(c.worse, 'Nothing got worse.')}</section>
<section id="better"><h2>What got better</h2>${headlineList(c.better, 'Nothing got better.')}</section>
<section id="checks"><h2>Checks</h2>
<table><thead><tr><th>Check</th><th>Then</th><th>Now</th><th>Change</th><th>Metrics that moved (then → now)</th></tr></thead><tbody>
${c.checks.map((k) => html`<tr><td>${k.title} <code>${k.id}</code></td><td>${status(k.baseline)}</td><td>${status(k.current)}</td><td>${change(k.change)}</td>
<td class="small">${k.metrics.filter((m) => m.baseline !== m.current).map((m) => html`<code>${m.name}</code> ${fmtCell(m.baseline)} → ${fmtCell(m.current)}; `)}</td></tr>`)}
</tbody></table></section>
<section id="findings-new"><h2>New findings (${fmtNumber(byState('new').length)})</h2>${byState('new').length ? findingRows(byState('new')) : html`<p class="muted">None.</p>`}</section>
<section id="findings-resolved"><h2>Resolved findings (${fmtNumber(byState('resolved').length)})</h2>${byState('resolved').length ? findingRows(byState('resolved')) : html`<p class="muted">None.</p>`}</section>
${byState('unlisted').length ? html`<section id="findings-unlisted"><h2>Findings on one report's list only (${fmtNumber(byState('unlisted').length)})</h2><p class="muted">The other report's check listed only its first findings, so these may still be there: open that report's check to see its full summary.</p>${findingRows(byState('unlisted'))}</section>` : ''}
<section id="findings-changed"><h2>Persisting findings whose status changed (${fmtNumber(byState('persisting').length)})</h2>${byState('persisting').length ? findingRows(byState('persisting')) : html`<p class="muted">None; ${fmtNumber(c.counts.persisting_findings)} findings persist unchanged in status.</p>`}</section>
<section id="targets"><h2>Target policies</h2>
${c.targets.map((t) => html`<h3>${t.name}${t.presence !== 'both' ? html` <span class="muted">(${t.presence})</span>` : ''}</h3>
<table><thead><tr><th></th><th>Then</th><th>Now</th><th>Change</th></tr></thead><tbody>
${([['ESS', t.ess], ['ESS / n', t.ess_fraction], ['k̂', t.khat], ['support deficit', t.support_deficit], ['largest weight', t.max_weight]] as const).map(([name, v]) => html`<tr><td>${name}</td><td class="num">${fmtNumber(v.baseline)}</td><td class="num">${fmtNumber(v.current)}</td><td class="num">${fmtNumber(v.delta)}</td></tr>`)}
</tbody></table>
<table><thead><tr><th>Estimate</th><th>Then [95% CI]</th><th>Now [95% CI]</th><th>Difference</th><th>z</th><th>p</th><th>Beyond combined uncertainty</th></tr></thead><tbody>
${estimateRow('IPS', t.ips)}${estimateRow('SNIPS', t.snips)}${estimateRow('DR', t.dr)}
</tbody></table>`)}
</section>
<section id="segments"><h2>Segments whose readiness changed (${fmtNumber(c.counts.changed_segments)})</h2>
<table><thead><tr><th>Segment</th><th>Then</th><th>Now</th><th>Change</th><th>Rows then</th><th>Rows now</th></tr></thead><tbody>
${c.segments.filter((s) => s.change !== 'same').slice(0, MAX_ROWS).map((s) => html`<tr><td>${fmtSegment(s.segment)}</td><td>${status(s.baseline)}</td><td>${status(s.current)}</td><td>${change(s.change)}</td><td class="num">${fmtNumber(s.rows.baseline)}</td><td class="num">${fmtNumber(s.rows.current)}</td></tr>`)}
</tbody></table></section>
`;
  return reportPage(`Counterweight comparison: ${labels.baseline} → ${labels.current}`, body, COMPARISON_CSS);
}
