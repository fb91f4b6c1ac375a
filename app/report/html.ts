/**
 * The self-contained HTML report: one file, no network (CSP forbids scripts and every fetch), inline CSS,
 * charts as inline SVG rendered server-side. Every value that came from a log or a report passes through
 * the `html` template tag, which escapes it with escapeHtml.
 */
import type { CheckResult, Estimate, Finding, Metrics, Remedies, Report, SegmentReadiness, Status, TargetSummary, Verdict } from '../core/model/report.ts';
import { REMEDY_TITLES } from '../core/remedies/links.ts';
import { readinessCauses } from '../core/verdict.ts';
import { remedyLines } from './remedies-text.ts';
import { chartForSeries, chartHeight, estimatesOption, STATUS_LABELS } from '../charts/index.ts';
import { isShareMetric, metricWords, settingValueText, SHOWN_STATUS, shownStatus } from '../charts/labels.ts';
import { fmtCell, fmtInterval, fmtNumber, fmtSegment, fmtShare, loggedValueText, withTimesInWords } from './format.ts';
import { makeChart, type ChartFn, type HtmlOptions } from './html-chart.ts';
import { html, reportPage, type SafeHtml } from './html-template.ts';
import { weightsRows } from './target-words.ts';

export { REPORT_CSP } from './html-style.ts';
export type { HtmlOptions } from './html-chart.ts';

const MAX_FINDINGS = 200;
const MAX_SEGMENTS = 500;


const VERDICT_TEXT: Record<Verdict, { text: string; icon: string }> = {
  supported: { text: 'Supported', icon: '✓' },
  'supported-with-caveats': { text: 'Supported with caveats', icon: '!' },
  'not-supported': { text: 'Not supported', icon: '✕' },
};

export function renderHtmlReport(report: Report, options: HtmlOptions = {}): string {
  const chart = makeChart(options);
  const title = `Counterweight audit: ${report.input.files.map((f) => f.path).join(', ') || 'log'}`;
  const body = html`
<header>
  <h1>Counterweight audit report</h1>
  <p class="meta">${report.input.files.map((f) => f.path).join(', ')} · ${report.input.format} · ${fmtNumber(report.input.rows)} rows</p>
  <p class="meta">Generated ${withTimesInWords(report.run.started_at)} by ${report.tool.name} ${report.tool.version} (${report.run.engine} engine, ${fmtNumber(report.run.seconds)} s, ${fmtNumber(report.run.source_scans)} scans of the log${report.run.peak_rss_mb === undefined ? '' : `, peak memory ${fmtNumber(report.run.peak_rss_mb)} MB`}) · report schema ${report.schema}</p>
</header>
${verdictSection(report)}
${cautionsBlock(report.cautions)}
${tocBlock(report)}
${overviewSection(report.checks)}
${targetsSection(report.targets, report, chart)}
${segmentsSection(report.segments)}
${remediesSection(report.remedies)}
<h2 id="checks">Checks</h2>
${report.checks.map((c) => checkSection(c, chart, report.settings))}
${settingsSection(report)}
${rolesSection(report)}
${inputSection(report)}
${queriesSection(report)}
${signoffSection(report)}
<h2 id="cautions-end">Cautions</h2>
${cautionsBlock(report.cautions)}
`;
  return reportPage(title, body);
}

function statusBadge(status: Status): SafeHtml {
  const label = STATUS_LABELS[status];
  return html`<span class="status status-${status}"><span aria-hidden="true">${label.icon}</span> ${label.text}</span>`;
}

/** A check's status in the one vocabulary of the UI, terminal and report (app/charts/labels.ts). */
function checkBadge(check: CheckResult): SafeHtml {
  const shown = shownStatus(check);
  const label = SHOWN_STATUS[shown];
  const css = shown === 'not-applicable' || shown === 'not-run' || shown === 'informational' ? 'skipped' : shown;
  return html`<span class="status status-${css}" title="${label.explain}"><span aria-hidden="true">${label.icon}</span> ${label.text}</span>`;
}

function verdictSection(report: Report): SafeHtml {
  const v = VERDICT_TEXT[report.verdict];
  return html`
<section class="verdict verdict-${report.verdict}" id="verdict">
  <p class="label"><span aria-hidden="true">${v.icon}</span> Verdict: ${v.text}</p>
  ${report.reasons.length === 0
    ? html`<p>No check raised a warning or a failure.</p>`
    : html`<ul>${report.reasons.map((r) => html`<li>${statusBadge(r.status)} <a href="#check-${r.check}"><code>${r.check}</code></a>: ${withTimesInWords(r.message)}${remedyLinks(r.remedies)}</li>`)}</ul>`}
</section>`;
}

/** Links from a reason to the remedies that address it (the section below). */
function remedyLinks(kinds: readonly (keyof typeof REMEDY_TITLES)[] | undefined): SafeHtml | string {
  if (!kinds || kinds.length === 0) return '';
  return html` <span class="small">Remedies: ${kinds.map((k, i) => html`${i ? ', ' : ''}<a href="#remedy-${k}">${REMEDY_TITLES[k]}</a>`)}</span>`;
}

const MAX_PLAN_ROWS = 200;

function remediesSection(remedies: Remedies | undefined): SafeHtml | string {
  if (!remedies) return '';
  const lines = remedyLines(remedies);
  const plan = remedies.plan.slice(0, MAX_PLAN_ROWS);
  return html`<h2 id="remedies">What would make this usable</h2>
${lines.map((l) => html`<p><strong>${l.target}</strong></p><ul>${[l.restricted, l.caps, l.plan].filter((x): x is string => x !== null).map((x) => html`<li>${x}</li>`)}</ul>`)}
<h3 id="remedy-restricted">${REMEDY_TITLES.restricted}</h3>
<table><thead><tr><th>Target</th><th>Mass inside</th><th>SNIPS</th><th>95% CI</th><th>IPS</th><th>95% CI</th><th>DR</th><th>95% CI</th><th>Supported variant</th><th>95% CI</th></tr></thead><tbody>
${remedies.restricted.map((r) => html`<tr><td>${r.target}</td><td class="num">${fmtShare(r.mass_inside)}</td>${estimateCells(r.snips)}${estimateCells(r.ips)}${estimateCells(r.dr)}${estimateCells(r.variant.estimate)}</tr>`)}
</tbody></table>
${remedies.restricted.map((r) => html`<p class="muted">${r.target}: ${r.not_covered} The supported variant: ${r.variant.method}.</p>`)}
<h3 id="remedy-caps">${REMEDY_TITLES.caps}</h3>
<table><thead><tr><th>Target</th><th>Cap</th><th>Clipped IPS</th><th>95% CI</th><th>Bias bound</th><th>ESS</th><th>Rows clipped</th><th>MSE bound</th></tr></thead><tbody>
${remedies.caps.flatMap((c) => [...c.list, ...(c.best ? [c.best] : [])].map((x, i) => html`<tr><td>${c.target}${c.best && i === c.list.length ? ' (least MSE bound)' : ''}</td><td class="num">${fmtNumber(x.cap)}</td>${estimateCells(x.estimate)}<td class="num">${fmtNumber(x.bias_bound)}</td><td class="num">${fmtNumber(x.ess)}</td><td class="num">${fmtNumber(x.clipped_rows)}</td><td class="num">${fmtNumber(x.mse_bound)}</td></tr>`))}
</tbody></table>
<p class="muted">Rewards assumed within [${fmtNumber(remedies.reward_range.min)}, ${fmtNumber(remedies.reward_range.max)}] (${remedies.reward_range.source}).</p>
<h3 id="remedy-plan">${REMEDY_TITLES.plan}</h3>
<p>At ${fmtShare(remedies.plan_options.power)} power and two-sided α = ${fmtNumber(remedies.plan_options.alpha)}, within ${fmtNumber(remedies.plan_options.days)} days.</p>
<table><thead><tr><th>Target</th><th>Segment</th><th>Rows per day</th><th>ε-greedy share</th><th>Floor</th><th>Days</th><th>Reachable</th><th>Cost per decision</th></tr></thead><tbody>
${plan.map((p) => html`<tr><td>${p.target}</td><td>${Object.keys(p.segment).length ? fmtSegment(p.segment) : 'whole log'}</td><td class="num">${fmtNumber(p.rows_per_day)}</td><td class="num">${fmtNumber(p.share)}</td><td class="num">${fmtNumber(p.floor)}</td><td class="num">${fmtNumber(p.days)}</td><td>${p.reachable ? 'yes' : 'no'}</td><td class="num">${fmtNumber(p.cost)}</td></tr>`)}
</tbody></table>
${remedies.plan.length > plan.length ? html`<p class="muted">${remedies.plan.length - plan.length} more plan rows are in the JSON report.</p>` : ''}
${cautionsBlock(remedies.cautions)}`;
}

function cautionsBlock(cautions: readonly string[]): SafeHtml {
  return html`<aside class="cautions"><strong>Before relying on this report</strong><ul>${cautions.map((c) => html`<li>${c}</li>`)}</ul></aside>`;
}

function tocBlock(report: Report): SafeHtml {
  return html`<nav class="toc"><ol>
<li><a href="#overview">Checks at a glance</a></li><li><a href="#targets">Targets and estimates</a></li>
<li><a href="#segments">Segment readiness</a></li>${report.remedies ? html`<li><a href="#remedies">What would make this usable</a></li>` : ''}<li><a href="#checks">Checks in detail</a></li>
<li><a href="#settings">Settings</a></li><li><a href="#roles">Column roles</a></li>
<li><a href="#input">Input fingerprint</a></li><li><a href="#queries">Queries</a></li>
<li><a href="#signoff">Sign-off</a>${report.signoff ? '' : ' (not signed)'}</li></ol></nav>`;
}

function overviewSection(checks: readonly CheckResult[]): SafeHtml {
  return html`<h2 id="overview">Checks at a glance</h2>
<table><thead><tr><th>Check</th><th>Status</th><th>Summary</th></tr></thead><tbody>
${checks.map((c) => html`<tr><td><a href="#check-${c.id}">${c.title}</a><br><code class="small">${c.id}</code></td><td>${checkBadge(c)}</td><td>${withTimesInWords(c.summary)}</td></tr>`)}
</tbody></table>`;
}

function estimateCells(e: Estimate): SafeHtml {
  return html`<td class="num">${fmtNumber(e.value)}</td><td class="num">${fmtInterval(e.ci_low, e.ci_high)}</td>`;
}

function targetsSection(targets: readonly TargetSummary[], report: Report, chart: ChartFn): SafeHtml {
  if (targets.length === 0) return html`<h2 id="targets">Targets and estimates</h2><p class="muted">No target policy was evaluated.</p>`;
  const onPolicy = report.checks.find((c) => c.id === 'estimate.preview')?.metrics.on_policy_value;
  return html`<h2 id="targets">Targets and estimates</h2>
<table><thead><tr><th>Target</th><th>ESS</th><th>ESS / n</th><th>Max weight</th><th>Top 1% weight share</th><th>k̂ (Pareto tail shape)</th><th>Support deficit</th></tr></thead><tbody>
${weightsRows(report, (x) => fmtNumber(x)).map(({ target: t, spec, khat, khatNote }) => html`<tr><td>${t.name}${spec === null ? '' : html`<br><code class="small">${spec}</code>`}</td><td class="num">${fmtNumber(t.ess)}</td><td class="num">${fmtShare(t.ess_fraction)}</td><td class="num">${fmtNumber(t.max_weight)}</td><td class="num">${fmtShare(t.top1_weight_share)}</td><td class="num">${khat}${khatNote === null ? '' : html`<br><span class="small muted">${khatNote}</span>`}</td><td class="num">${fmtShare(t.support_deficit)}</td></tr>`)}
</tbody></table>
<table><thead><tr><th rowspan="2">Target</th><th colspan="2">IPS</th><th colspan="2">SNIPS</th><th colspan="2">Doubly robust</th><th rowspan="2">Detectable difference (80% power)</th></tr>
<tr><th>value</th><th>95% CI</th><th>value</th><th>95% CI</th><th>value</th><th>95% CI</th></tr></thead><tbody>
${targets.map((t) => html`<tr><td>${t.name}</td>${estimateCells(t.ips)}${estimateCells(t.snips)}${estimateCells(t.dr)}<td class="num">${fmtNumber(t.detectable_difference)}</td></tr>`)}
</tbody></table>
${chart(estimatesOption(targets, typeof onPolicy === 'number' ? onPolicy : null), 320, 'Estimated value by target')}`;
}

function segmentsSection(segments: readonly SegmentReadiness[]): SafeHtml {
  if (segments.length === 0) return html`<h2 id="segments">Segment readiness</h2><p class="muted">No segment columns were mapped.</p>`;
  const essKeys = [...new Set(segments.flatMap((s) => Object.keys(s.ess)))];
  const shown = segments.slice(0, MAX_SEGMENTS);
  const causes = readinessCauses(segments);
  return html`<h2 id="segments">Segment readiness</h2>
${causes.length ? html`<p>Segments not ready, by cause:</p><ul class="causes">${causes.map((c) => html`<li>${c.cause}: ${fmtNumber(c.segments)} of ${fmtNumber(segments.length)} segments</li>`)}</ul>` : ''}
<table><thead><tr><th>Segment</th><th>Status</th><th>Rows</th><th>Share</th><th>Explored</th><th>Top action share</th><th>Min propensity</th>${essKeys.map((k) => html`<th>ESS ${k}</th>`)}<th>Drift</th></tr></thead><tbody>
${shown.map((s) => html`<tr><td>${fmtSegment(s.segment)}</td><td>${statusBadge(s.status)}</td><td class="num">${fmtNumber(s.rows)}</td><td class="num">${fmtShare(s.share)}</td><td>${s.explored ? 'yes' : 'NO'}</td><td class="num">${fmtShare(s.top_action_share)}</td><td class="num">${fmtNumber(s.min_propensity)}</td>${essKeys.map((k) => html`<td class="num">${fmtNumber(s.ess[k])}</td>`)}<td>${s.drift_flags.join(', ') || '—'}</td></tr>`)}
</tbody></table>
${segments.length > shown.length ? html`<p class="muted">${segments.length - shown.length} more segments are in the JSON report.</p>` : ''}`;
}

function metricsTable(metrics: Metrics): SafeHtml {
  const entries = Object.entries(metrics);
  if (entries.length === 0) return html``;
  // the label, with its plain explanation and source on hover (title) and in print as the small line under it
  return html`<table class="kv"><tbody>${entries.map(([k, v]) => { const w = metricWords(k); return html`<tr><td title="${w.explain}${w.source ? ` Source: ${w.source}.` : ''}">${w.label}<br><span class="muted small">${w.explain}</span></td><td>${metricCell(k, v)}</td></tr>`; })}</tbody></table>`;
}

/** A metric's value: a share as a percent, as the app and the terminal show shares. */
function metricCell(key: string, value: unknown): string {
  // three significant digits, as the app shows a share: 0.01573 -> 1.57%, 1 -> 100%
  if (typeof value === 'string') return withTimesInWords(value);
  return typeof value === 'number' && Number.isFinite(value) && isShareMetric(key) ? `${Number((value * 100).toPrecision(3))}%` : fmtCell(value);
}

function inlineMetrics(metrics: Metrics): string {
  return Object.entries(metrics).map(([k, v]) => `${metricWords(k).label}: ${metricCell(k, v)}`).join('; ');
}

function findingRow(f: Finding): SafeHtml {
  const examples = f.examples && f.examples.length > 0 ? f.examples : null;
  const columns = examples ? [...new Set(examples.flatMap((r) => Object.keys(r)))] : [];
  return html`<tr><td>${statusBadge(f.status)}</td><td>${fmtSegment(f.segment)}</td><td>${f.action ?? '—'}</td><td>${f.window ? withTimesInWords(`${f.window.from} to ${f.window.to}`) : '—'}</td><td>${f.target ?? '—'}</td>
<td>${withTimesInWords(f.message)}${inlineMetrics(f.metrics) ? html`<br><span class="muted small">${inlineMetrics(f.metrics)}</span>` : ''}
${examples ? html`<div class="scroll"><table class="small"><caption>Example rows (as logged; times in UTC)</caption><thead><tr>${columns.map((c) => html`<th>${c}</th>`)}</tr></thead><tbody>${examples.map((r) => html`<tr>${columns.map((c) => html`<td>${loggedValueText(r[c])}</td>`)}</tr>`)}</tbody></table></div>` : ''}
${f.sql ? html`<pre>${f.sql}</pre>` : ''}</td></tr>`;
}

function checkSection(check: CheckResult, chart: ChartFn, settings: Report['settings']): SafeHtml {
  const findings = check.findings.slice(0, MAX_FINDINGS);
  return html`<section class="check" id="check-${check.id}">
<h3>${check.title} <code class="small">${check.id}</code> ${checkBadge(check)}</h3>
<p>${withTimesInWords(check.summary)}</p>
${metricsTable(check.metrics)}
${findings.length > 0 ? html`<table class="findings"><colgroup><col class="c-status"><col class="c-segment"><col class="c-action"><col class="c-window"><col class="c-target"><col></colgroup><thead><tr><th>Status</th><th>Segment</th><th>Action</th><th>Window</th><th>Target</th><th>Finding</th></tr></thead><tbody>${findings.map(findingRow)}</tbody></table>` : html`<p class="muted">No findings.</p>`}
${check.findings.length > findings.length ? html`<p class="muted">${check.findings.length - findings.length} more findings are in the JSON report.</p>` : ''}
${(check.series ?? []).map((s) => { const option = chartForSeries(s); return option ? chart(option, chartHeight(s), s.name) : html``; })}
${check.settings_used.length ? html`<p class="muted small">Settings used: ${check.settings_used.map((k) => html`<a href="#setting-${k}"><code>${k}</code></a>${settings[k] ? ` = ${settingValueText(k, settings[k].value)}` : ''}; `)}</p>` : ''}
</section>`;
}

function settingsSection(report: Report): SafeHtml {
  return html`<h2 id="settings">Settings</h2>
<table><thead><tr><th>Setting</th><th>Value</th><th>Default</th><th>Source</th><th>Meaning</th></tr></thead><tbody>
${Object.entries(report.settings).map(([k, s]) => html`<tr id="setting-${k}"><td><code>${k}</code></td><td class="${s.value === s.default ? '' : 'changed'}">${fmtCell(s.value)}${s.value === s.default ? '' : ' (changed)'}</td><td>${fmtCell(s.default)}</td><td>${s.source}</td><td>${s.description}</td></tr>`)}
</tbody></table>`;
}

function rolesSection(report: Report): SafeHtml {
  const r = report.roles;
  const rows: [string, string | null][] = [
    ['decision_id', r.decision_id], ['time', r.time], ['action', r.action], ['propensity', r.propensity], ['reward', r.reward],
    ['segments', r.segments.length ? r.segments.join(', ') : null], ['policy_version', r.policy_version],
    ['target_propensity', r.target_propensity], ['propensity_vector', r.propensity_vector], ['action_set_size', r.action_set_size],
  ];
  const caps = Object.entries(r.caps);
  return html`<h2 id="roles">Column roles</h2>
<table><thead><tr><th>Role</th><th>Column</th><th>Why</th></tr></thead><tbody>
${rows.map(([role, col]) => html`<tr><td>${role}</td><td>${col ?? '—'}</td><td>${r.reasons[role] ?? ''}</td></tr>`)}
</tbody></table>
${caps.length ? html`<p>Segment columns capped to their most frequent values (the rest grouped as “(other)”): ${caps.map(([c, v]) => html`<code>${c}</code> kept ${fmtNumber(v.kept)} of ${fmtNumber(v.distinct)} values; `)}</p>` : ''}`;
}

function inputSection(report: Report): SafeHtml {
  return html`<h2 id="input">Input fingerprint</h2>
<p>${report.input.format} · ${fmtNumber(report.input.rows)} rows</p>
<table><thead><tr><th>File</th><th>Bytes</th><th>SHA-256</th><th>Modified</th></tr></thead><tbody>
${report.input.files.map((f) => html`<tr><td>${f.path}</td><td class="num">${fmtNumber(f.bytes)}</td><td><code class="small">${f.sha256}</code></td><td>${f.modified ?? '—'}</td></tr>`)}
</tbody></table>`;
}

function queriesSection(report: Report): SafeHtml {
  return html`<h2 id="queries">Queries</h2>
<p class="muted">Every query the audit ran, in order; “scans the log” marks the ones that read the source.</p>
${report.queries.map((q) => html`<h3>${q.name}${q.scans_source ? ' · scans the log' : ''}</h3><pre>${q.sql}</pre>`)}`;
}

function signoffSection(report: Report): SafeHtml {
  const s = report.signoff;
  if (!s) return html`<h2 id="signoff">Sign-off</h2><p>Not signed. A reviewer signs with <code>counterweight sign</code>; the sign-off is the reviewer's judgement, not the tool's.</p>`;
  return html`<h2 id="signoff">Sign-off</h2>
<table class="kv"><tbody>
<tr><td>reviewer</td><td>${s.reviewer}</td></tr><tr><td>decision</td><td>${s.decision}</td></tr><tr><td>note</td><td>${s.note || '—'}</td></tr>
<tr><td>signed at</td><td>${withTimesInWords(s.signed_at)}</td></tr><tr><td>digest (SHA-256)</td><td><code class="small">${s.digest}</code></td></tr>
<tr><td>signature</td><td>${s.signature ? html`${s.signature.algorithm}, public key <code class="small">${s.signature.public_key}</code>` : 'none (digest only)'}</td></tr>
</tbody></table>`;
}
