/**
 * IPS, SNIPS and doubly robust estimates and standard errors against numpy's row-by-row definitions, two-pass
 * (test/reference/stats/make-estimators.py → estimators.json, "small"): 600 rows over 5 segments × 4 actions with
 * uneven propensities, a target table, a (segment, action) cell of one row and one never logged, for a 0/1 and a
 * continuous reward. The cells carry the sums the cube forms, over r and over d = r − shift.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { EstimatorCell } from '../../../app/core/cube/types.ts';
import { doublyRobust, ips, snips, type Estimate } from '../../../app/core/stats/estimators.ts';

interface Row { segment: number; action: number; p: number; binary: number; continuous: number }
interface Ref { value: number; se: number }
const REF = JSON.parse(readFileSync(new URL('../../reference/stats/estimators.json', import.meta.url), 'utf8')) as {
  small: { rows: Row[]; target: number[][]; binary: Record<'ips' | 'snips' | 'dr', Ref>; continuous: Record<'ips' | 'snips' | 'dr', Ref> };
};
const ACTIONS = ['0', '1', '2', '3'];
const pi = (s: string, a: string) => REF.small.target[Number(s)]?.[Number(a)] ?? Number.NaN;

/** Cells of every logged (segment, action), with the plain sums and, unless `centred` is false, the sums about `shift`. */
function cellsOf(reward: 'binary' | 'continuous', shift: number, centred = true): EstimatorCell[] {
  const map = new Map<string, Row[]>();
  for (const r of REF.small.rows) map.set(`${r.segment}|${r.action}`, [...(map.get(`${r.segment}|${r.action}`) ?? []), r]);
  return [...map.values()].map((rows) => {
    const f = (g: (x: Row, r: number, d: number) => number) => rows.reduce((s, x) => s + g(x, x[reward], x[reward] - shift), 0);
    const first = rows[0] as Row;
    const cell: EstimatorCell = {
      segmentKey: String(first.segment), action: String(first.action), q: pi(String(first.segment), String(first.action)), n: rows.length,
      sumInvP: f((x) => 1 / x.p), sumInvP2: f((x) => 1 / x.p ** 2), sumR: f((_x, r) => r), sumR2: f((_x, r) => r * r),
      sumRInvP: f((x, r) => r / x.p), sumRInvP2: f((x, r) => r / x.p ** 2), sumR2InvP2: f((x, r) => (r * r) / x.p ** 2),
      ...(centred ? { centred: { shift, sumD: f((_x, _r, d) => d), sumD2: f((_x, _r, d) => d * d), sumDInvP: f((x, _r, d) => d / x.p), sumDInvP2: f((x, _r, d) => d / x.p ** 2), sumD2InvP: f((x, _r, d) => (d * d) / x.p), sumD2InvP2: f((x, _r, d) => (d * d) / x.p ** 2) } } : {}),
    };
    return cell;
  });
}

const run = (cells: EstimatorCell[]): Record<'ips' | 'snips' | 'dr', Estimate> => ({
  ips: ips(cells, REF.small.rows.length),
  snips: snips(cells),
  dr: doublyRobust(cells, pi, ACTIONS),
});

describe('estimators against numpy (row-by-row definitions, two-pass)', () => {
  it.each([
    { reward: 'binary' as const, shift: 0.5 },
    { reward: 'binary' as const, shift: 0 },
    { reward: 'continuous' as const, shift: 27.5 },
  ])('$reward reward, centred about $shift: value and SE of IPS, SNIPS and DR to 1e-10', ({ reward, shift }) => {
    const got = run(cellsOf(reward, shift));
    for (const k of ['ips', 'snips', 'dr'] as const) {
      expect(Math.abs(got[k].value - REF.small[reward][k].value) / Math.abs(REF.small[reward][k].value), `${k} value`).toBeLessThan(1e-10);
      expect(Math.abs(got[k].se - REF.small[reward][k].se) / REF.small[reward][k].se, `${k} SE`).toBeLessThan(1e-10);
    }
  });

  it('without centred sums a 0/1 reward still gives DR\'s exact SE (Σr²/p = Σr/p), a continuous one a wider bound, never a narrower one', () => {
    const binary = run(cellsOf('binary', 0, false)).dr;
    expect(Math.abs(binary.se - REF.small.binary.dr.se) / REF.small.binary.dr.se).toBeLessThan(1e-10);
    const continuous = run(cellsOf('continuous', 0, false)).dr;
    expect(continuous.se).toBeGreaterThan(REF.small.continuous.dr.se);
    expect(Math.abs(continuous.value - REF.small.continuous.dr.value) / REF.small.continuous.dr.value).toBeLessThan(1e-10);
  });
});
