import { describe, expect, it } from 'vitest';
import { compareReports } from '../../../app/core/compare/compare.ts';
import { matchFindings, type Span } from '../../../app/core/compare/match.ts';
import type { CheckResult, Finding, Report } from '../../../app/core/model/report.ts';
import { renderComparisonHtml } from '../../../app/report/comparison-html.ts';
import { validateComparison } from '../../../app/report/comparison-json.ts';
import { fixtureReport, SCRIPT } from '../report/fixture-report.ts';

const DAY = 86_400_000;
const finding = (window: [number, number] | null, extra: Partial<Finding> = {}): Finding => ({
  segment: { tenure: 'lapsed' }, status: 'warn', metrics: { relative_change: -0.5 }, message: 'drift',
  ...(window ? { window: { from: new Date(window[0]).toISOString(), to: new Date(window[1]).toISOString() } } : {}), ...extra,
});

function withFindings(base: Report, start: number, days: number, findings: Finding[]): Report {
  const coverage: CheckResult = {
    id: 'time.coverage', title: 'Time', status: 'pass', summary: '', findings: [], settings_used: [],
    metrics: { start: new Date(start).toISOString(), bucket_end: new Date(start + days * DAY).toISOString() },
  };
  const drift: CheckResult = { id: 'drift.reward', title: 'Reward drift', status: 'warn', summary: '', metrics: {}, findings, settings_used: [] };
  return { ...base, checks: [...base.checks.filter((c) => c.id !== 'time.coverage' && c.id !== 'drift.reward'), coverage, drift] };
}

describe('matching findings by what they locate', () => {
  const t0 = Date.UTC(2026, 2, 2);
  const base = fixtureReport();
  it.each([
    // [case, baseline log (start, days), its windows, current log, its windows, expected states]
    ['overlapping windows in overlapping logs pair up', [t0, 30], [[t0 + 20 * DAY, t0 + 30 * DAY]], [t0, 30], [[t0 + 25 * DAY, t0 + 30 * DAY]], ['persisting']],
    ['disjoint windows in overlapping logs do not', [t0, 30], [[t0, t0 + 2 * DAY]], [t0, 30], [[t0 + 20 * DAY, t0 + 22 * DAY]], ['resolved', 'new']],
    ['in successive logs, the last days of one meet the last days of the next', [t0, 30], [[t0 + 28 * DAY, t0 + 30 * DAY]], [t0 + 30 * DAY, 7], [[t0 + 36 * DAY, t0 + 37 * DAY]], ['persisting']],
    ['in successive logs, the first days of one do not meet the last days of the next', [t0, 30], [[t0, t0 + 3 * DAY]], [t0 + 30 * DAY, 7], [[t0 + 36 * DAY, t0 + 37 * DAY]], ['resolved', 'new']],
    ['a windowless finding pairs only with a windowless one', [t0, 30], [null], [t0, 30], [[t0, t0 + DAY]], ['resolved', 'new']],
    ['two windows pair with their best overlaps', [t0, 30], [[t0, t0 + 5 * DAY], [t0 + 20 * DAY, t0 + 30 * DAY]], [t0, 30], [[t0 + 21 * DAY, t0 + 30 * DAY], [t0 + DAY, t0 + 4 * DAY]], ['persisting', 'persisting']],
  ] as const)('%s', (_name, [aStart, aDays], aWindows, [bStart, bDays], bWindows, states) => {
    const a = withFindings(base, aStart, aDays, aWindows.map((w) => finding(w ? [w[0], w[1]] : null)));
    const b = withFindings(base, bStart, bDays, bWindows.map((w) => finding(w ? [w[0], w[1]] : null)));
    const span = (s: number, d: number): Span => ({ from: s, to: s + d * DAY });
    const pairs = matchFindings(a, b, span(aStart, aDays), span(bStart, bDays)).filter((p) => p.check === 'drift.reward');
    expect(pairs.map((p) => (p.baseline && p.current ? 'persisting' : p.baseline ? 'resolved' : 'new'))).toEqual(states);
  });

  it('tells findings apart by segment, action, target and scope', () => {
    const a = withFindings(base, t0, 30, [finding(null), finding(null, { action: 'bakery' }), finding(null, { metrics: { scope: 'segment' } })]);
    const b = withFindings(base, t0, 30, [finding(null, { segment: { tenure: 'new' } }), finding(null, { action: 'bakery' }), finding(null, { metrics: { scope: 'policy version' } })]);
    const c = compareReports(a, b).findings.filter((f) => f.check === 'drift.reward');
    expect(c.map((f) => [f.state, f.segment.tenure, f.action ?? '', f.scope ?? ''])).toEqual([
      ['resolved', 'lapsed', '', ''], ['persisting', 'lapsed', 'bakery', ''], ['resolved', 'lapsed', '', 'segment'],
      ['new', 'new', '', ''], ['new', 'lapsed', '', 'policy version'],
    ]);
  });
});

describe('compareReports', () => {
  it('a status that got worse and a new failing finding are regressions; a new warning is not', () => {
    const a = fixtureReport();
    const worseChecks = a.checks.map((c) => (c.id === 'weights.ess' ? { ...c, status: 'fail' as const, findings: [{ segment: { region: 'x' }, status: 'fail' as const, metrics: { ess: 3 }, message: 'tiny' }, { segment: { region: 'y' }, status: 'warn' as const, metrics: { ess: 30 }, message: 'small' }] } : c));
    const c = compareReports(a, { ...a, checks: worseChecks });
    expect(c.regression).toBe(true);
    expect(c.worse.map((h) => [h.kind, h.regression])).toEqual([['check', true], ['finding', true], ['finding', false]]);
    expect(c.checks.find((k) => k.id === 'weights.ess')!.change).toBe('worse');
  });

  it('estimates differ only beyond their combined uncertainty', () => {
    const a = fixtureReport();
    const move = (value: number) => ({ ...a, targets: a.targets.map((t) => ({ ...t, snips: { ...t.snips, value } })) });
    const se = a.targets[0]!.snips.se!;
    const v = a.targets[0]!.snips.value!;
    // z = d / (se·√2): 1.96·√2·se is the smallest difference that differs at 5%.
    expect(compareReports(a, move(v + 1.9 * Math.SQRT2 * se)).targets[0]!.snips!.differs).toBe(false);
    expect(compareReports(a, move(v + 2.0 * Math.SQRT2 * se)).targets[0]!.snips!.differs).toBe(true);
  });

  it('the HTML comparison escapes every value that came from a log', () => {
    const a = fixtureReport({ hostile: true });
    const b = { ...a, checks: a.checks.map((c) => ({ ...c, findings: [] })) };
    const c = compareReports(a, b);
    expect(validateComparison(c).errors).toEqual([]);
    const page = renderComparisonHtml(c, { baseline: `${SCRIPT}.json`, current: 'b.json' });
    expect(page).not.toContain(SCRIPT);
    expect(page).toContain('&lt;script&gt;');
    expect(page).not.toMatch(/<script/i);
  });
});

describe('findings left off a capped list', () => {
  const base = fixtureReport();
  const located = (region: string): Finding => ({ segment: { region }, action: 'bakery', target: 'uniform', status: 'warn', metrics: { mass: 0.01 }, message: `unsupported in ${region}` });
  const withSupport = (findings: Finding[], notListed?: number): Report => ({
    ...base,
    checks: [...base.checks.filter((c) => c.id !== 'support.target'), {
      id: 'support.target', title: 'Support for each target', status: 'warn', summary: '', findings, settings_used: [],
      metrics: notListed === undefined ? {} : { findings_not_listed: notListed },
    }],
  });
  const states = (a: Report, b: Report) => compareReports(a, b).findings.filter((f) => f.check === 'support.target').map((f) => [f.segment.region, f.state, f.change]);

  it('a finding missing from a list that left findings out is unlisted, not resolved; from a complete list it is resolved', () => {
    const a = withSupport([located('north'), located('south')]);
    expect(states(a, withSupport([located('north')], 3))).toEqual([['north', 'persisting', 'same'], ['south', 'unlisted', 'changed']]);
    expect(states(a, withSupport([located('north')]))).toEqual([['north', 'persisting', 'same'], ['south', 'resolved', 'removed']]);
  });

  it('the same holds the other way round: a finding the capped baseline did not list is not new', () => {
    const c = compareReports(withSupport([located('north')], 1), withSupport([located('north'), located('south')]));
    expect(c.findings.filter((f) => f.check === 'support.target').map((f) => f.state)).toEqual(['persisting', 'unlisted']);
    expect(c.counts.unlisted_findings).toBe(1);
    expect(c.counts.new_findings).toBe(0);
    expect(c.better.concat(c.worse).some((h) => h.message.includes('south'))).toBe(false);
    expect(validateComparison(JSON.parse(JSON.stringify(c)))).toBeTruthy();
    expect(renderComparisonHtml(c, { baseline: 'a.json', current: 'b.json' })).toContain('findings-unlisted');
  });
});
