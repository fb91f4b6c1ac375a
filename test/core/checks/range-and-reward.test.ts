/** propensity.range and reward.validity from hand-written rows: the stated shares decide, counts by hand. */
import { describe, expect, it } from 'vitest';
import { propensityRange } from '../../../app/core/checks/propensity-range.ts';
import { rewardValidity } from '../../../app/core/checks/reward-validity.ts';
import { contextOf, type Rows } from './build.ts';

/** 10,000 rows of 2 actions at p = 0.5 in segments x and y, then `bad` extra rows in y. */
const log = (bad: Rows[]): Rows[] => [
  { segment: ['x'], action: 'a', p: 0.5, r: 1, count: 2500 }, { segment: ['x'], action: 'b', p: 0.5, r: 0, count: 2500 },
  { segment: ['y'], action: 'a', p: 0.5, r: 1, count: 2500 }, { segment: ['y'], action: 'b', p: 0.5, r: 0, count: 2500 - bad.reduce((s, g) => s + (g.count ?? 1), 0) },
  ...bad,
];

describe('propensity.range (fail above 0.1% of rows invalid, common practice; warn on any)', () => {
  it.each([
    // by hand: invalid rows / 10,000 against 0.001
    { name: 'none', bad: [], status: 'pass', invalid: 0 },
    { name: '10 null (0.1%, not above)', bad: [{ segment: ['y'], action: 'b', p: null, r: 0, count: 10 }], status: 'warn', invalid: 10 },
    { name: '5 at p = 0 and 6 at p = 1.5 (0.11%)', bad: [{ segment: ['y'], action: 'b', p: 0, r: 0, count: 5 }, { segment: ['y'], action: 'b', p: 1.5, r: 0, count: 6 }], status: 'fail', invalid: 11 },
  ])('$name: $status', ({ bad, status, invalid }) => {
    const r = propensityRange.run(contextOf(log(bad as Rows[]), {}));
    expect(r.status).toBe(status);
    expect(r.metrics.invalid_rows).toBe(invalid);
    expect(r.metrics.invalid_share).toBeCloseTo(invalid / 10_000, 15);
    if (invalid) expect(r.findings.some((f) => f.segment.s0 === 'y' && f.metrics.invalid_rows === invalid)).toBe(true);
    // counts with a thousands separator, as everywhere in the app (CLDR en grouping: "10,000")
    expect(r.summary).toEqual(invalid ? expect.stringMatching(new RegExp(`^${invalid} rows \\(`)) : 'All 10,000 propensities lie in (0, 1].');
  });
});

describe('reward.validity (warn above 5% of rows without a reward, fail above 20%; common practice)', () => {
  it.each([
    // by hand: missing rewards / 10,000
    { missing: 0, status: 'pass' },
    { missing: 500, status: 'pass' },
    { missing: 501, status: 'warn' },
    { missing: 2000, status: 'warn' },
    { missing: 2001, status: 'fail' },
  ])('$missing missing of 10,000: $status', ({ missing, status }) => {
    const r = rewardValidity.run(contextOf(log(missing ? [{ segment: ['y'], action: 'b', p: 0.5, r: null, count: missing }] : []), {}));
    expect(r.status).toBe(status);
    expect(r.metrics.missing).toBe(missing);
    expect(r.metrics.missing_share).toBeCloseTo(missing / 10_000, 15);
  });
});
