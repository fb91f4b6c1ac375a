/** balance.weights from hand-written rows: each case states where its expected value comes from. */
import { describe, expect, it } from 'vitest';
import { balanceWeights } from '../../../app/core/checks/balance-weights.ts';
import { supportTarget } from '../../../app/core/checks/support-target.ts';
import { contextOf, grid, type Rows } from './build.ts';

const run = (rows: readonly Rows[], options: Parameters<typeof contextOf>[1] = {}) => balanceWeights.run(contextOf(rows, options));

/** One group of 500 rows without segments: action a logged `k` times at p = 0.016, action b the rest at 0.984. */
const rare = (k: number): Rows[] => [{ action: 'a', p: 0.016, count: k }, { action: 'b', p: 0.984, count: 500 - k }];

describe('balance.weights', () => {
  it.each([
    // scipy.stats.binomtest(1, 500, 0.016).pvalue = 0.0063; b mirrors a (binomtest(499, 500, 0.984) is the same), so BH leaves it
    { k: 1, status: 'fail', pAdjusted: 0.00630537146946906 },
    // scipy.stats.binomtest(2, 500, 0.016).pvalue = 0.0297: BH-adjusted 0.059 > q = 0.02, so it holds
    { k: 2, status: 'pass', pAdjusted: null },
    // 8 events = exactly the expected 500 · 0.016: B = 1
    { k: 8, status: 'pass', pAdjusted: null },
  ])('small expected counts use the exact binomial test: $k event(s) in 500 rows at p = 0.016 → $status', ({ k, status, pAdjusted }) => {
    const r = run(rare(k), { settings: { 'balance.q': 0.02 } });
    expect(r.status).toBe(status);
    expect(r.metrics.exact_tests).toBe(2);
    const f = r.findings.find((x) => x.action === 'a');
    if (pAdjusted === null) expect(f).toBeUndefined();
    else {
      expect(f?.metrics.p_adjusted as number).toBeCloseTo(pAdjusted, 6);
      expect(f?.metrics.test).toBe('exact binomial');
      expect(f?.metrics.expected as number).toBeCloseTo(8, 10);
    }
  });

  it('normal test above 10 expected events: z from the sample SD of 1[A = a]/p (by hand: z = 0.2 / sqrt(3360/999/1000) = 3.449)', () => {
    // 1000 rows; a logged 300 times at p = 0.25 (X = 4), b 700 times at 0.75. B = 1200/1000 = 1.2;
    // Σ(X − B)² = 300·16 − 1000·1.44 = 3360. Expected count 250, so the normal test applies.
    const r = run([{ action: 'a', p: 0.25, count: 300 }, { action: 'b', p: 0.75, count: 700 }]);
    const f = r.findings.find((x) => x.action === 'a')!;
    expect(f.metrics.test).toBe('normal');
    expect(f.metrics.z as number).toBeCloseTo(0.2 / Math.sqrt(3360 / 999 / 1000), 9);
  });

  it('one unusual segment among 50 is within chance once the tests are adjusted (Benjamini–Hochberg), though its raw p = 0.0063 < q', () => {
    // 49 segments log a 8 times in 500 rows at p = 0.016 (B = 1); one logs it once: scipy.stats.binomtest(1, 500, 0.016) = 0.0063.
    // 102 tests (2 overall, 2 per segment); BH-adjusted p of the pair = 0.0063 · 102 / 2 = 0.32 > q = 0.01.
    const rows: Rows[] = Array.from({ length: 50 }, (_, i) => [{ segment: [`s${i}`], action: 'a', p: 0.016, count: i === 0 ? 1 : 8 }, { segment: [`s${i}`], action: 'b', p: 0.984, count: i === 0 ? 499 : 492 }]).flat();
    const r = run(rows);
    expect(r.metrics.tests).toBe(102);
    expect(r.status).toBe('pass');
  });

  it('honest counts in many small segments (expected count 2 each) hold: no test is dropped for its row count', () => {
    const segments = Array.from({ length: 200 }, (_, i) => [`s${i}`]);
    const r = run(grid(segments, ['a', 'b'], (_s, a) => (a === 'a' ? 0.05 : 0.95), (_s, a) => (a === 'a' ? 2 : 38)));
    expect(r.status).toBe('pass');
    // every segment value tests both actions (40 rows each, below the 50-row minimum this check used to have)
    expect(r.metrics.tests).toBe(2 + 200 * 2);
  });

  it('an action ineligible in a segment (p = 0 there, others renormalised) is support information, not a balance failure', () => {
    const rows: Rows[] = [
      ...grid([['x']], ['a', 'b', 'c'], () => 1 / 3, () => 300),
      ...grid([['y']], ['a', 'b'], () => 0.5, () => 450),
    ];
    const r = run(rows);
    expect(r.status).toBe('pass');
    expect(r.metrics.never_logged).toBeGreaterThan(0);
    // the never-logged cell is null in the z map with its reason, never a sentinel number
    const map = r.series?.find((s) => s.kind === 'heatmap');
    const yi = map!.y!.indexOf('y');
    const xi = map!.x.indexOf('c');
    expect(map!.values[yi]![xi]).toBeNull();
    expect(map!.null_reasons![yi]![xi]).toBe('never logged');
    expect(JSON.stringify(r)).not.toMatch(/\b99\b/);
    // it blocks only where a primary target puts mass on it: uniform does (support.target fails), always:a does not
    expect(supportTarget.run(contextOf(rows, { targets: [{ spec: 'uniform' }] })).status).toBe('fail');
    expect(supportTarget.run(contextOf(rows, { targets: [{ spec: 'always:a' }] })).status).toBe('pass');
  });

  /** 4 segments × 5 days, actions a (p = 0.2) and b (0.8), counts exactly as expected; on day 3 the log records a's p doubled. */
  const doubled = (): Rows[] => {
    const rows: Rows[] = [];
    for (let d = 0; d < 5; d++) for (const s of ['n', 'e', 's', 'w']) {
      rows.push({ segment: [s], action: 'a', bucket: d, p: d === 3 ? 0.4 : 0.2, count: 100 });
      rows.push({ segment: [s], action: 'b', bucket: d, p: 0.8, count: 400 });
    }
    return rows;
  };

  it('a doubled propensity on one day in every segment fails, on that day (B = 0.5 by construction)', () => {
    const r = run(doubled(), { days: 5 });
    expect(r.status).toBe('fail');
    const f = r.findings.find((x) => x.status === 'fail' && x.window);
    expect(f?.action).toBe('a');
    expect(f?.window?.from).toBe('2026-01-04T00:00:00.000Z');
    expect(f?.metrics.balance).toBeCloseTo(0.5, 12);
  });

  it('one odd below-floor row elsewhere leaves the defect found; only tests of its own groups are left out, listed, and the check is not a pass', () => {
    const rows = [...doubled(), { segment: ['n'], action: 'a', bucket: 0, p: 0.005 }];
    const r = run(rows, { days: 5 });
    expect(r.status).toBe('fail');
    const f = r.findings.find((x) => x.status === 'fail' && x.window);
    expect(f?.window?.from).toBe('2026-01-04T00:00:00.000Z');
    const left = r.findings.find((x) => x.status === 'warn');
    // the overall test of a, segment value n, and day 0 hold the odd row: 3 tests left out, no others
    expect(left?.metrics.left_out).toBe(3);
    expect(left?.message).toMatch(/time bucket all rows bucket 0/);
    expect(r.metrics.skipped_below_floor).toBe(3);
  });

  it('a below-floor row alone makes the check warn, never pass silently', () => {
    const rows = [...grid([['x'], ['y']], ['a', 'b'], () => 0.5, () => 200), { segment: ['x'], action: 'a', p: 0.005 }];
    const r = run(rows);
    expect(r.status).toBe('warn');
  });

  /**
   * 4 regions × 3 devices × 10 days; policy v1 on days 0–4, v2 after. Action a is logged 40 times in 200 rows at a
   * claimed p = 0.2 (B = 1), b 160 times at 0.8. In region r2 under v1, on days 2–4 only, a's logged propensity is
   * halved (B = 40 · 10 / 200 = 2), and in its device d1 cut to a third (B = 3): the most extreme single cell is
   * r2 × d1, but the one group that accounts for every failing test is a in region r2 under v1, from day 2.
   */
  const episode = (): Rows[] => {
    const rows: Rows[] = [];
    for (let d = 0; d < 10; d++) for (const r of ['r1', 'r2', 'r3', 'r4']) for (const v of ['d1', 'd2', 'd3']) {
      const bad = r === 'r2' && d >= 2 && d <= 4;
      const version = d < 5 ? 'v1' : 'v2';
      rows.push({ segment: [r, v], action: 'a', bucket: d, version, p: bad ? (v === 'd1' ? 0.2 / 3 : 0.1) : 0.2, count: 40 });
      rows.push({ segment: [r, v], action: 'b', bucket: d, version, p: 0.8, count: 160 });
    }
    return rows;
  };

  it('names the smallest segment value × action × version group that accounts for the failing tests, with the window from its change point', () => {
    const r = run(episode(), { days: 10, versions: true, segmentColumns: ['region', 'device'] });
    expect(r.status).toBe('fail');
    const first = r.findings[0]!;
    expect(first.action).toBe('a');
    expect(first.segment).toEqual({ region: 'r2' });
    expect(first.metrics.scope).toBe('policy version');
    expect(first.metrics.version).toBe('v1');
    // days 2–4 (bucket 2 starts 2026-01-03; the window ends where bucket 5 starts)
    expect(first.window).toEqual({ from: '2026-01-03T00:00:00.000Z', to: '2026-01-06T00:00:00.000Z' });
    // leaving r2 × v1 out explains every failing test, so no other group is reported
    expect(first.metrics.accounts_for).toBe(r.metrics.failing);
    expect(r.metrics.groups).toBe(1);
    expect(first.message).toMatch(/a in region=r2, policy v1, from 2026-01-03 to 2026-01-06: B = /);
  });
});
