/**
 * support.floor from hand-written rows: the share of rows with propensity below ε decides, counts by hand.
 * Thresholds are the settings table's defaults (app/core/settings.ts), both marked "common practice":
 * ε = support.floor.epsilon = 0.01, warn when the share below ε exceeds support.floor.max_share = 0.01.
 */
import { describe, expect, it } from 'vitest';
import { supportFloor } from '../../../app/core/checks/support-floor.ts';
import { contextOf, type Rows } from './build.ts';

/** 10,000 rows, 2 actions in segments x and y at p = 0.5, then `low` rows of action c in y at propensity `p`. */
const log = (low: number, p = 0.005): Rows[] => [
  { segment: ['x'], action: 'a', p: 0.5, count: 2500 }, { segment: ['x'], action: 'b', p: 0.5, count: 2500 },
  { segment: ['y'], action: 'a', p: 0.5, count: 2500 }, { segment: ['y'], action: 'b', p: 0.5, count: 2500 - low },
  ...(low ? [{ segment: ['y'], action: 'c', p, count: low }] : []),
];

describe('support.floor (warn above 1% of rows below ε = 0.01; common practice)', () => {
  it.each([
    // by hand: share = rows below ε / 10,000 against 0.01 (strictly above warns)
    { name: 'none below ε', low: 0, p: 0.005, status: 'pass', below: 0, min: 0.5 },
    { name: '100 rows at p = 0.005 (1%, not above)', low: 100, p: 0.005, status: 'pass', below: 100, min: 0.005 },
    { name: '101 rows at p = 0.005 (1.01%)', low: 101, p: 0.005, status: 'warn', below: 101, min: 0.005 },
    // p = ε itself is not below the floor (p < ε is the test): 2,000 rows at exactly 0.01 count for nothing
    { name: '2,000 rows at p = ε exactly (not below)', low: 2000, p: 0.01, status: 'pass', below: 0, min: 0.01 },
  ])('$name: $status', ({ low, p, status, below, min }) => {
    const r = supportFloor.run(contextOf(log(low, p), {}));
    expect(r.status).toBe(status);
    expect(r.metrics.rows_below_floor).toBe(below);
    expect(r.metrics.share_below_floor).toBeCloseTo(below / 10_000, 15);
    expect(r.metrics.min_propensity).toBe(min);
    expect(r.metrics.cells_below_floor).toBe(below ? 1 : 0);
    // c is logged only in y, so the finding names c over all segments (the cover generalises)
    if (below) expect(r.findings.some((f) => f.action === 'c' && f.metrics.rows_below_floor === below)).toBe(true);
    else expect(r.findings).toHaveLength(0);
    // places counted in words, never "place(s)"; the finding's row count with a thousands separator (by hand: 2,500 rows in y·c's cell are not this case)
    expect(r.summary).toContain(below ? '1 place with cells under the floor' : 'no places with cells under the floor');
    expect(r.summary).not.toContain('(s)');
  });

  it('a raised ε moves the edge: at ε = 0.6 every p = 0.5 row is below, share 1 (by hand)', () => {
    const r = supportFloor.run(contextOf(log(0), { settings: { 'support.floor.epsilon': 0.6 } }));
    expect(r.metrics.share_below_floor).toBe(1);
    expect(r.status).toBe('warn');
  });

  it('does not apply to an empty log: skipped, no metrics', () => {
    const r = supportFloor.run(contextOf([], {}));
    expect(r.status).toBe('skipped');
    expect(r.metrics.share_below_floor).toBeUndefined();
  });
});
