/** drift.reward from hand-written rows: a known change of a 0/1 reward, values by hand. */
import { describe, expect, it } from 'vitest';
import { driftReward } from '../../../app/core/checks/drift-reward.ts';
import { contextOf, type Rows } from './build.ts';

/**
 * 10 daily buckets, the first 3 empty (no rows at all). Segment x: actions a and b, 100 rows a day each at
 * p = 0.5, reward 1 on 20 of them before day 6 and on 60 from day 6. Segment y: 30 of 100 every day.
 */
function drifting(): Rows[] {
  const rows: Rows[] = [];
  for (let d = 3; d < 10; d++) for (const action of ['a', 'b']) {
    const ones = d >= 6 ? 60 : 20;
    rows.push({ segment: ['x'], action, bucket: d, p: 0.5, r: 1, count: ones }, { segment: ['x'], action, bucket: d, p: 0.5, r: 0, count: 100 - ones });
    rows.push({ segment: ['y'], action, bucket: d, p: 0.5, r: 1, count: 30 }, { segment: ['y'], action, bucket: d, p: 0.5, r: 0, count: 70 });
  }
  return rows;
}

describe('drift.reward', () => {
  const r = driftReward.run(contextOf(drifting(), { days: 10 }));

  it('warns where the reward changed, from the day it changed (empty days before it do not shift the window)', () => {
    expect(r.status).toBe('warn');
    const f = r.findings.find((x) => x.segment.s0 === 'x' && x.action === 'a');
    // day 6 of a log whose buckets start 2026-01-01: 2026-01-07, not the 3rd non-empty bucket's 2026-01-04
    expect(f?.window?.from).toBe('2026-01-07T00:00:00.000Z');
    expect(f?.metrics.mean_before).toBeCloseTo(0.2, 12);
    expect(f?.metrics.mean_after).toBeCloseTo(0.6, 12);
  });

  it('the relative change is against the mean before the change: (0.6 − 0.2)/0.2 = 2 (by hand)', () => {
    const pooled = r.findings.find((x) => x.segment.s0 === 'x' && x.action === undefined);
    expect(pooled?.metrics.relative_change as number).toBeCloseTo(2, 12);
    const single = r.findings.find((x) => x.segment.s0 === 'x' && x.action === 'a');
    expect(single?.metrics.relative_change as number).toBeCloseTo(2, 12);
  });

  it('the stable segment is not flagged', () => {
    expect(r.findings.filter((x) => x.segment.s0 === 'y')).toEqual([]);
  });
});

/**
 * Benjamini–Hochberg, not raw p ≤ q: 20 segments logging one action (p = 1) over 2 days, 100 rows a day.
 * Segment x0 rewards 20 of 100 on day 0 and 33 of 100 on day 1: raw p = 0.03726 (scipy 1.17:
 * scipy.stats.chi2_contingency([[20, 80], [33, 67]], correction=False).pvalue = 0.03726325708596981), below
 * q = 0.05. The other 19 reward 25 of 100 both days (p = 1), and the whole log's test is far from significant,
 * so among the 21 tests (the whole log and each segment, action a) BH adjusts x0's p to 21 · 0.03726 = 0.7825
 * (Benjamini & Hochberg 1995: min over j ≥ rank of p₍ⱼ₎ · m / j).
 */
function oneOfTwenty(): Rows[] {
  const rows: Rows[] = [];
  for (let s = 0; s < 20; s++) for (const [day, ones] of [[0, s === 0 ? 20 : 25], [1, s === 0 ? 33 : 25]] as const) {
    rows.push({ segment: [`x${s}`], action: 'a', bucket: day, p: 1, r: 1, count: ones }, { segment: [`x${s}`], action: 'a', bucket: day, p: 1, r: 0, count: 100 - ones });
  }
  return rows;
}

describe('drift.reward adjusts for the number of tests (Benjamini–Hochberg)', () => {
  it('one segment of 20 with raw p = 0.037 < q = 0.05 is within chance once adjusted: a pass', () => {
    const r = driftReward.run(contextOf(oneOfTwenty(), { days: 2 }));
    expect(r.metrics.tests).toBe(21);
    expect(r.status).toBe('pass');
    expect(r.findings.filter((f) => f.status !== 'pass')).toEqual([]);
  });

  it('the same deviation is flagged once q is above its adjusted p, which is 21 × scipy\'s raw p', () => {
    const r = driftReward.run(contextOf(oneOfTwenty(), { days: 2, settings: { 'drift.reward.q': 0.9 } }));
    expect(r.status).toBe('warn');
    const f = r.findings.filter((x) => x.status !== 'pass');
    expect(f.map((x) => x.segment.s0)).toEqual(['x0']);
    expect(f[0]?.metrics.p_adjusted as number).toBeCloseTo(21 * 0.03726325708596981, 9);
  });
});
