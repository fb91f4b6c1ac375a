import { describe, expect, it } from 'vitest';
import { formatAuditSummary, painter } from '../../../app/cli/summary.ts';
import { escapeHtml } from '../../../app/report/escape.ts';
import { serializeReport } from '../../../app/report/serialize.ts';
import { REPORT_CSP, renderHtmlReport } from '../../../app/report/html.ts';
import { trustedSvg } from '../../../app/report/html-template.ts';
import { fixtureReport, QUOTE_BREAK, SCRIPT, SQL_BREAK } from './fixture-report.ts';

describe('escapeHtml', () => {
  // The five characters OWASP's XSS prevention cheat sheet (rule #1) says to encode in HTML content/attributes.
  it.each([
    ['&', '&amp;'], ['<', '&lt;'], ['>', '&gt;'], ['"', '&quot;'], ["'", '&#39;'],
    [SCRIPT, '&lt;script&gt;alert(1)&lt;/script&gt;'], ['a&amp;b', 'a&amp;amp;b'], [null, ''], [12, '12'],
  ])('escapes %j as %j', (input, output) => {
    expect(escapeHtml(input)).toBe(output);
  });
});

describe('HTML report', () => {
  const hostile = renderHtmlReport(fixtureReport({ hostile: true }));

  it('never emits a script element or an event attribute from log values', () => {
    expect(hostile).not.toMatch(/<script/i);
    expect(hostile).not.toMatch(/<[^>]*\sonmouseover\s*=/i);
    expect(hostile).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    expect(hostile).toContain(escapeHtml(SQL_BREAK));
    expect(hostile).toContain(escapeHtml(QUOTE_BREAK));
  });

  it('escapes log values inside the charts\' SVG text too', () => {
    const svgs = hostile.match(/<svg[\s\S]*?<\/svg>/g) ?? [];
    expect(svgs.length).toBeGreaterThanOrEqual(4);
    const joined = svgs.join('');
    expect(joined).not.toContain(SCRIPT);
    expect(joined).toContain('&lt;script&gt;');
  });

  it('declares a CSP that forbids scripts and network', () => {
    expect(REPORT_CSP).toContain("default-src 'none'");
    expect(REPORT_CSP).not.toMatch(/script-src|connect-src/);
    expect(hostile).toContain(`<meta http-equiv="Content-Security-Policy" content="${REPORT_CSP}">`);
    expect(hostile).not.toMatch(/\s(src|href)\s*=\s*["']?(https?:|\/\/)/i);
  });

  it('holds every section a reviewer needs', () => {
    const plain = renderHtmlReport(fixtureReport());
    for (const text of ['Verdict: Not supported', 'Checks at a glance', 'Targets and estimates', 'Segment readiness', 'Settings', 'Column roles', 'Input fingerprint', 'Queries', 'Sign-off', 'necessary, not sufficient', '@media print']) {
      expect(plain).toContain(text);
    }
    expect(plain).toContain('a'.repeat(64));
    expect(plain).toContain('<pre>SELECT region, count(*)');
    expect(plain).toMatch(/status-fail"><span aria-hidden="true">✕<\/span> FAIL/);
    expect(plain).toMatch(/0\.02 \(changed\)/);
    expect(plain).toContain('[0.09, 0.13]');
  });

  it('writes instants for people as the app does, shares as percents, and each setting used with its value', () => {
    const base = fixtureReport();
    // drift.policy's summary as the check writes it (app/core/checks/drift-policy.ts): the switch time in ISO 8601
    const iso = 'Policy version switches: rules-a → rules-b at 2026-03-08T00:00:00.000Z. No action-mix shifts.';
    const withIso = { ...base, checks: base.checks.map((c) => (c.id === 'weights.ess' ? { ...c, summary: iso } : c)) };
    const page = renderHtmlReport(withIso);
    expect(page).toContain('rules-a → rules-b at 2026-03-08 00:00 UTC.');
    expect(page).not.toContain('2026-03-08T00:00:00.000Z');
    // the terminal summary says it the same way; the JSON report keeps the check's text, ISO included
    const terminal = formatAuditSummary(withIso, [], painter(false));
    expect(terminal).toContain('rules-a → rules-b at 2026-03-08 00:00 UTC.');
    expect(terminal).not.toContain('2026-03-08T00:00:00.000Z');
    expect(serializeReport(withIso)).toContain('at 2026-03-08T00:00:00.000Z.');
    // the fixture's ε was changed to 0.02; weights.ess.warn_fraction is a share (0.1 = 10%)
    expect(page).toMatch(/<code>support\.floor\.epsilon<\/code><\/a> = 0\.02;/);
    expect(page).toMatch(/<code>weights\.ess\.warn_fraction<\/code><\/a> = 10%;/);
    // a finding's top_action_share of 1 is 100% of the segment's rows, not "1"
    expect(page).toContain('top action share: 100%');
  });

    it('drops an SVG that carries active content', () => {
    expect(trustedSvg('<svg><text>&lt;script&gt;</text></svg>')).not.toBeNull();
    expect(trustedSvg('<svg><script>x()</script></svg>')).toBeNull();
    expect(trustedSvg('<svg><rect onload="x()"/></svg>')).toBeNull();
    expect(trustedSvg('<svg><a href="https://example.org">x</a></svg>')).toBeNull();
    const html = renderHtmlReport(fixtureReport(), { renderChart: () => '<svg><script>x()</script></svg>' });
    expect(html).not.toMatch(/<script/i);
    expect(html).toContain('omitted: its SVG contained active content');
  });
});
