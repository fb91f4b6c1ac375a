/** drift.policy from hand-written rows: the action-mix tests are adjusted for their number (Benjamini–Hochberg). */
import { describe, expect, it } from 'vitest';
import { driftPolicy } from '../../../app/core/checks/drift-policy.ts';
import { contextOf, type Rows } from './build.ts';

/**
 * 20 segments, 2 actions logged at p = 0.5, 4 daily buckets of 100 rows. Every segment logs 50 of each a day,
 * except x0 on its last day: 68 of a, 32 of b, with the propensities still logged at 0.5 (so they do not follow
 * the mix: B of a there is 68 · 2 / 100 = 1.36). x0's mix test has raw p = 0.02035 (scipy 1.17:
 * scipy.stats.chi2_contingency([[50, 50], [50, 50], [50, 50], [68, 32]], correction=False).pvalue =
 * 0.0203508123794065), below q = 0.05; its PSI first → last day is 0.18 · ln 1.36 + 0.18 · ln(1 / 0.64) = 0.136
 * (by hand), above the 0.1 notice band. Among the 21 tests (the whole log and each segment) BH adjusts it to
 * 21 · 0.02035 = 0.4274 (Benjamini & Hochberg 1995: min over j ≥ rank of p₍ⱼ₎ · m / j; every other test has p ≥ 0.9).
 */
function oneOfTwenty(): Rows[] {
  const rows: Rows[] = [];
  for (let s = 0; s < 20; s++) for (let day = 0; day < 4; day++) {
    const a = s === 0 && day === 3 ? 68 : 50;
    rows.push({ segment: [`x${s}`], action: 'a', bucket: day, p: 0.5, r: 0, count: a }, { segment: [`x${s}`], action: 'b', bucket: day, p: 0.5, r: 0, count: 100 - a });
  }
  return rows;
}

describe('drift.policy adjusts for the number of tests (Benjamini–Hochberg)', () => {
  it('one segment of 20 with raw p = 0.020 < q = 0.05 is within chance once adjusted: no shift is reported', () => {
    const r = driftPolicy.run(contextOf(oneOfTwenty(), { days: 4 }));
    expect(r.status).toBe('pass');
    expect(r.findings).toEqual([]);
  });

  it('the same shift is reported, unexplained by the logged propensities, once q is above its adjusted p (21 × scipy\'s raw p)', () => {
    const r = driftPolicy.run(contextOf(oneOfTwenty(), { days: 4, settings: { 'drift.policy.q': 0.5 } }));
    expect(r.status).toBe('warn');
    expect(r.findings.map((f) => [f.segment.s0, f.status])).toEqual([['x0', 'warn']]);
    expect(r.findings[0]?.metrics.p_adjusted as number).toBeCloseTo(21 * 0.0203508123794065, 9);
    expect(r.findings[0]?.metrics.psi as number).toBeCloseTo(0.18 * Math.log(1.36) + 0.18 * Math.log(1 / 0.64), 9);
    expect(r.findings[0]?.metrics.propensities_follow_mix).toBe(false);
  });
});
