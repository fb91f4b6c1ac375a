/** The targets tables' words (app/report/target-words.ts), in the app's Weights screen and the HTML report: names once, k̂'s missing value in words. */
import { describe, expect, it } from 'vitest';
import type { Report } from '../../../app/core/model/report.ts';
import { weightsRows } from '../../../app/report/target-words.ts';
import { formatValue } from '../../../renderer/format.ts';
import { renderHtmlReport } from '../../../app/report/html.ts';
import { fixtureReport } from './fixture-report.ts';

/** The fixture report with always:upgrade added: its k̂ is missing, and weights.tail says whether its tail is bounded. */
function withAlways(bounded: boolean): Report {
  const r = fixtureReport();
  const base = r.targets[0]!;
  const always = { ...base, name: 'always:upgrade', spec: 'always:upgrade', khat: null, khat_threshold: 0.7, tail_length: 520 };
  const table = { ...base, name: 'table:v9', spec: 'table:sample-data/v9.csv' };
  const checks = r.checks.map((c) => c.id !== 'weights.tail' ? c : {
    ...c, status: 'pass' as const,
    findings: [{ segment: {}, target: 'always:upgrade', status: 'pass' as const, metrics: { khat: null, bounded, threshold: 0.7, tail_length: 520, rows: 30000 }, message: '' }],
  });
  return { ...r, checks, targets: [base, always, table] };
}

describe('Weights table rows', () => {
  it('names each target once: the spec is shown under the name only where it differs from it', () => {
    const rows = weightsRows(withAlways(true), formatValue);
    // what the row header shows: the name, then the spec when there is one
    const headers = rows.map((x) => [x.target.name, x.spec].filter((s) => s !== null).join(' '));
    expect(headers).toEqual(['uniform', 'always:upgrade', 'table:v9 table:sample-data/v9.csv']);
    for (const h of headers) expect(h.split('always:upgrade').length - 1).toBeLessThanOrEqual(1);
  });

  it.each([
    { bounded: true, khat: 'bounded (fail above 0.7)', note: /largest weights tie.*bounded \(k̂ = −∞\)/ },
    { bounded: false, khat: 'not available (fail above 0.7)', note: /Too few positive weights to fit a Pareto tail to the largest 520/ },
  ])('a missing k̂ says why (bounded: $bounded) and that the number is the fail limit', ({ bounded, khat, note }) => {
    const row = weightsRows(withAlways(bounded), formatValue).find((x) => x.target.name === 'always:upgrade')!;
    expect(row.khat).toBe(khat);
    expect(row.khatNote).toMatch(note);
    expect(row.khat).not.toContain('—');
  });

  it('a fitted k̂ is shown with its limit and no note', () => {
    const row = weightsRows(withAlways(true), formatValue).find((x) => x.target.name === 'uniform')!;
    expect(row.khat).toBe('0.31 (fail above 0.7)');
    expect(row.khatNote).toBeNull();
  });

  it('the HTML report\'s targets table says the same: the name once, k̂ in words with its note', () => {
    const page = renderHtmlReport(withAlways(true));
    const row = page.slice(page.indexOf('<td>always:upgrade'), page.indexOf('</tr>', page.indexOf('<td>always:upgrade')));
    expect(row).not.toContain('<code class="small">always:upgrade</code>');
    expect(row).toContain('bounded (fail above 0.7)');
    expect(row).toContain('The largest weights tie');
    expect(row).not.toContain('— (0.7');
  });
});
