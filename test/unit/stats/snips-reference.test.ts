/** SNIPS and its delta-method SE from cube sums, against numpy (test/reference/calibration/make-snips.py). */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { EstimatorCell } from '../../../app/core/cube/types.ts';
import { snips } from '../../../app/core/stats/estimators.ts';

const fixture = JSON.parse(readFileSync(new URL('../../reference/calibration/snips.json', import.meta.url), 'utf8')) as { source: string; rows: { segment: number; action: number; p: number; q: number; r: number }[]; snips: number; se: number };

/** The fixture's rows summed per (segment, action), as the cube holds them. */
function cells(): EstimatorCell[] {
  const m = new Map<string, EstimatorCell & { n: number }>();
  for (const x of fixture.rows) {
    const k = `${x.segment}|${x.action}`;
    const c = m.get(k) ?? { segmentKey: String(x.segment), action: String(x.action), q: x.q, n: 0, sumInvP: 0, sumInvP2: 0, sumR: 0, sumR2: 0, sumRInvP: 0, sumRInvP2: 0, sumR2InvP2: 0 };
    m.set(k, { ...c, n: c.n + 1, sumInvP: c.sumInvP + 1 / x.p, sumInvP2: c.sumInvP2 + 1 / (x.p * x.p), sumR: c.sumR + x.r, sumR2: c.sumR2 + x.r * x.r, sumRInvP: c.sumRInvP + x.r / x.p, sumRInvP2: c.sumRInvP2 + x.r / (x.p * x.p), sumR2InvP2: c.sumR2InvP2 + (x.r * x.r) / (x.p * x.p) });
  }
  return [...m.values()];
}

describe(`SNIPS against ${fixture.source}`, () => {
  it('value and delta-method SE', () => {
    const e = snips(cells());
    expect(e.value).toBeCloseTo(fixture.snips, 12);
    expect(Math.abs(e.se - fixture.se) / fixture.se).toBeLessThan(1e-10);
  });
});
