/** The remedies in the terminal summary's last lines and in the HTML report's section, escaped like every log value. */
import { describe, expect, it } from 'vitest';
import type { Remedies, Report } from '../../../app/core/model/report.ts';
import { formatAuditSummary, painter } from '../../../app/cli/summary.ts';
import { renderHtmlReport } from '../../../app/report/html.ts';
import { fixtureReport } from '../report/fixture-report.ts';

const est = (value: number) => ({ value, se: 0.01, ci_low: value - 0.02, ci_high: value + 0.02 });
const cap = { cap: 12, estimate: est(0.3), bias_bound: 0.004, bias_low: 0, bias_high: 0.004, ess: 900, clipped_rows: 7, clipped_mass: 0.004, mse_bound: 0.0001 };
const remedies: Remedies = {
  reward_range: { min: 0, max: 1, source: 'test' },
  plan_options: { delta: { '<b>t</b>': 0.02 }, power: 0.8, alpha: 0.05, days: 30, log_days: 30 },
  restricted: [{ target: '<b>t</b>', epsilon: 0.01, min_rows: 2, pairs: 10, excluded_count: 1, excluded: [], mass_inside: 0.9, estimate: est(0.31), ips: est(0.32), snips: est(0.31), dr: est(0.3), variant: { method: "off-support mass moved to the logging policy's choice", estimate: est(0.29), ips: est(0.29), snips: est(0.29) }, not_covered: 'outside', notes: [] }],
  caps: [{ target: '<b>t</b>', exact_above: 3, list: [cap], best: cap, notes: [] }],
  plan: [{ target: '<b>t</b>', segment: {}, rows_per_day: 100, share: 0.2, floor: 0.05, days: 12, rows: 1200, reachable: true, cost: 0.003, logging_value: 0.3, sd: 0.4, current_floor: 0.01 }],
  cautions: ['careful'],
};
const report: Report = { ...fixtureReport(), remedies, reasons: [{ check: 'weights.tail', status: 'fail', message: 'heavy', remedies: ['caps', 'plan'] }] };

describe('remedies rendered', () => {
  it('end the terminal summary: one line per remedy and target', () => {
    const lines = formatAuditSummary(report, [], painter(false)).trimEnd().split('\n');
    expect(lines.slice(-4)[0]).toBe('What would make this usable');
    expect(lines.slice(-3).join('\n')).toMatch(/supports it \(90\.0% of its mass.*\n.*capped at 12.*bias at most 0\.004.*\n.*share 0\.2 \(every propensity ≥ 0\.05\) for 12 days detects 0\.02/);
  });

  it('have their HTML section, linked from the reasons, with log values escaped', () => {
    const page = renderHtmlReport(report);
    expect(page).toContain('<h2 id="remedies">What would make this usable</h2>');
    expect(page).toContain('href="#remedy-caps"');
    expect(page).toContain('href="#remedy-plan"');
    expect(page).not.toContain('<b>t</b>');
    expect(page).toContain('&lt;b&gt;t&lt;/b&gt;');
  });
});
