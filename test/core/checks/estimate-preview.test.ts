/**
 * estimate.preview from hand-written rows: uniform logging over two actions (p = 0.5), the target always:a.
 * Action a: 30 rows with reward 1 and 20 with 0; action b: 10 with 1 and 40 with 0 (100 rows).
 * By hand: weights are 2 on a's rows and 0 on b's, so IPS = (30 × 2) / 100 = 0.6, SNIPS = 60 / (50 × 2) = 0.6,
 * and the logging policy's own value is 40 / 100 = 0.4. IPS standard error: numpy 2.x,
 * `x = [2.0]*30 + [0.0]*70; x.std(ddof=1) / sqrt(100)` = 0.09211323729436764 (Horvitz & Thompson 1952, the
 * sample standard error of the weighted rewards). The warn rule: the SNIPS 95% half-width above
 * estimate.preview.max_relative_halfwidth (default 0.5, common practice) × the logging policy's value.
 */
import { describe, expect, it } from 'vitest';
import { estimatePreview } from '../../../app/core/checks/estimate-preview.ts';
import { contextOf, type Rows } from './build.ts';

const ROWS: Rows[] = [
  { action: 'a', p: 0.5, r: 1, count: 30 }, { action: 'a', p: 0.5, r: 0, count: 20 },
  { action: 'b', p: 0.5, r: 1, count: 10 }, { action: 'b', p: 0.5, r: 0, count: 40 },
];

const run = (settings: Record<string, number> = {}, rows: Rows[] = ROWS) => estimatePreview.run(contextOf(rows, { targets: [{ spec: 'always:a' }], settings }));

describe('estimate.preview', () => {
  it('IPS and SNIPS 0.6, the logging policy 0.4, the IPS standard error as numpy gives it', () => {
    const r = run();
    const f = r.findings.find((x) => x.target === 'always:a');
    expect(f?.metrics.ips).toBeCloseTo(0.6, 14);
    expect(f?.metrics.snips).toBeCloseTo(0.6, 14);
    expect(f?.metrics.ips_se).toBeCloseTo(0.09211323729436764, 14);
    expect(r.metrics.on_policy_value).toBeCloseTo(0.4, 14);
    // the detectable difference is 2.8 SE (two-sided 5%, 80% power: 1.96 + 0.84, common practice) of the SNIPS estimate
    expect(f?.metrics.detectable_difference).toBeCloseTo(2.8 * Number(f?.metrics.snips_se), 2);
  });

  it('passes while the SNIPS half-width is within half the logging value, warns when the limit is tightened below it', () => {
    const pass = run();
    expect(pass.status).toBe('pass');
    const half = Number(pass.findings[0]?.metrics.relative_halfwidth) * 0.4;
    // the half-width lies between 0.3 × 0.4 = 0.12 and 0.5 × 0.4 = 0.2: the limit 0.3 must warn
    expect(half).toBeGreaterThan(0.12);
    expect(half).toBeLessThan(0.2);
    expect(run({ 'estimate.preview.max_relative_halfwidth': 0.3 }).status).toBe('warn');
  });

  it('does not apply when fewer than 2 rows have a reward', () => {
    expect(run({}, [{ action: 'a', p: 0.5, r: 1, count: 1 }, { action: 'b', p: 0.5, r: null, count: 9 }]).status).toBe('skipped');
    expect(estimatePreview.run(contextOf([], {})).status).toBe('skipped');
  });
});
