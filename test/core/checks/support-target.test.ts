/** support.target from hand-written rows: the target's mass on cells the log never shows, each value worked out by hand. */
import { describe, expect, it } from 'vitest';
import { supportTarget } from '../../../app/core/checks/support-target.ts';
import { contextOf, type Rows } from './build.ts';

describe('support.target', () => {
  // 24 segments: in the 12 even ones the log is greedy (always b, p = 1), so always:a has no support there; in the
  // odd ones a and b are logged at p = 0.5. Even segment k holds 100 + 10k rows. The target puts all its mass on a,
  // so the unsupported mass of even segment k is its share of the rows (by hand): (100 + 10k) / total.
  const rows: Rows[] = [];
  for (let k = 0; k < 24; k++) {
    const segment = [`s${String(k).padStart(2, '0')}`];
    if (k % 2 === 0) rows.push({ segment, action: 'b', p: 1, count: 100 + 10 * k });
    else rows.push({ segment, action: 'a', p: 0.5, count: 50 }, { segment, action: 'b', p: 0.5, count: 50 });
  }
  const total = rows.reduce((s, g) => s + (g.count ?? 1), 0);
  const r = supportTarget.run(contextOf(rows, { targets: [{ spec: 'always:a' }] }));

  it('the unsupported mass is the greedy segments\' share of the rows', () => {
    const unsupported = rows.filter((g) => g.p === 1).reduce((s, g) => s + (g.count ?? 1), 0);
    expect(r.metrics['always:a.deficit'] as number).toBeCloseTo(unsupported / total, 12);
    expect(r.status).toBe('fail');
  });

  it('a capped list keeps the 10 largest masses, largest first, and says how many it left out', () => {
    // largest even segments: k = 22, 20, …, 4; the two smallest (k = 0, 2) are left out
    expect(r.findings.map((f) => f.segment.s0)).toEqual(['s22', 's20', 's18', 's16', 's14', 's12', 's10', 's08', 's06', 's04']);
    expect(r.findings[0]!.metrics.mass as number).toBeCloseTo((100 + 10 * 22) / total, 12);
    expect(r.metrics.findings_not_listed).toBe(2);
    expect(r.summary).toContain('2 more are not listed');
  });

  it('a list that is not capped records nothing left out', () => {
    const few = rows.filter((g) => Number((g.segment ?? ['s99'])[0]!.slice(1)) < 8);
    const small = supportTarget.run(contextOf(few, { targets: [{ spec: 'always:a' }] }));
    expect(small.findings).toHaveLength(4);
    expect(small.metrics.findings_not_listed).toBeUndefined();
    expect(small.summary).not.toContain('not listed');
  });
});
