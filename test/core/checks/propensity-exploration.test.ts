/**
 * propensity.exploration from hand-written rows. Thresholds are the settings table's defaults (app/core/settings.ts),
 * both "common practice": a segment is unexplored when one action holds at least 0.99 of its rows
 * (propensity.exploration.top_action_share); it fails when it holds at least 0.01 of the log
 * (propensity.exploration.min_segment_share) and a target serves it (the implicit uniform target serves all).
 */
import { describe, expect, it } from 'vitest';
import { propensityExploration } from '../../../app/core/checks/propensity-exploration.ts';
import { contextOf, type Rows } from './build.ts';

/** Segment x explored 50/50 on the rest of `total` rows; segment y holds `a` rows of a and `b` of b. */
const log = (a: number, b: number, total = 10_000): Rows[] => [
  { segment: ['x'], action: 'a', p: 0.5, count: (total - a - b) / 2 }, { segment: ['x'], action: 'b', p: 0.5, count: (total - a - b) / 2 },
  { segment: ['y'], action: 'a', p: 0.9, count: a }, ...(b ? [{ segment: ['y'], action: 'b', p: 0.1, count: b }] : []),
];

describe('propensity.exploration (unexplored at top share >= 0.99; fail at >= 1% of rows; common practice)', () => {
  it.each([
    // by hand: y's top share = a / (a + b); y's share of the log = (a + b) / total
    { name: 'y 98 a + 2 b (top 0.98)', a: 98, b: 2, total: 10_000, status: 'pass', unexplored: 0, share: 0 },
    { name: 'y 99 a + 1 b (top 0.99, 1% of rows)', a: 99, b: 1, total: 10_000, status: 'fail', unexplored: 1, share: 100 / 10_000 },
    { name: 'y 99 a + 1 b in 10,200 rows (0.98% of rows)', a: 99, b: 1, total: 10_200, status: 'warn', unexplored: 1, share: 100 / 10_200 },
  ])('$name: $status', ({ a, b, total, status, unexplored, share }) => {
    const r = propensityExploration.run(contextOf(log(a, b, total), {}));
    expect(r.status).toBe(status);
    expect(r.metrics.unexplored_segments).toBe(unexplored);
    expect(r.metrics.unexplored_share).toBeCloseTo(share, 15);
  });

  it('does not apply to an empty log: skipped', () => {
    expect(propensityExploration.run(contextOf([], {})).status).toBe('skipped');
  });
});
