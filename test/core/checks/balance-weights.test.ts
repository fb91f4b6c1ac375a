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

  it('the failing day explains the other significant tests away: once its rows are left out, the rest balances exactly (by hand: B = 16·500/8000 = 1), so one group is reported', () => {
    // every test of a that holds day 3 deviates (overall B = 9000/10000 = 0.9, each segment 0.9); the explain-away step
    // recomputes B over the uncovered rows from Σ1/p, and the normal test's SE from Σ1/p² (Σ1/p² = 25 per row at p = 0.2)
    const r = run(doubled(), { days: 5 });
    expect(r.metrics.failing as number).toBeGreaterThan(1);
    expect(r.metrics.groups).toBe(1);
    expect(r.findings.filter((x) => x.status === 'fail').map((x) => x.window?.from)).toEqual(['2026-01-04T00:00:00.000Z']);
  });

  it('explaining away recomputes the normal test\'s SE from Σ1/p² of the uncovered rows: what is left after the worst segment holds (by hand: z = 0.63)', () => {
    // x logs a at p = 0.25 though it is drawn at 0.5 (B = 2000/1000 = 2); y is honest, a 510 of 1000 at 0.5 (B = 1.02).
    // The overall test of a (B = 3020/2000 = 1.51) fails, but over y's rows alone Σ(X − B)² = 510·4 − 1000·1.02² = 999.6,
    // SE = sqrt(999.6/999/1000) = 0.0316, z = 0.02/0.0316 = 0.63, p = 0.53: explained by x, so one group is reported.
    const rows: Rows[] = [
      { segment: ['x'], action: 'a', p: 0.25, count: 500 }, { segment: ['x'], action: 'b', p: 0.5, count: 500 },
      { segment: ['y'], action: 'a', p: 0.5, count: 510 }, { segment: ['y'], action: 'b', p: 0.5, count: 490 },
    ];
    const r = run(rows);
    expect(r.metrics.failing).toBe(2);
    expect(r.metrics.groups).toBe(1);
    expect(r.findings.filter((x) => x.status === 'fail').map((x) => x.segment)).toEqual([{ s0: 'x' }]);
  });

  it('one odd below-floor row elsewhere leaves the defect found; only its own segment is set aside from the action\'s tests, listed, and the check is not a pass', () => {
    const rows = [...doubled(), { segment: ['n'], action: 'a', bucket: 0, p: 0.005 }];
    const r = run(rows, { days: 5 });
    expect(r.status).toBe('fail');
    const f = r.findings.find((x) => x.status === 'fail' && x.window);
    expect(f?.window?.from).toBe('2026-01-04T00:00:00.000Z');
    // day 3 without segment n: 3 segments × 100 rows of a at p = 0.4 over 3 × 500 rows, B = 750/1500 = 0.5 (by hand)
    expect(f?.metrics.balance).toBeCloseTo(0.5, 12);
    const aside = r.findings.find((x) => x.status === 'warn');
    // segment n: 5 days × 500 rows, plus the odd row
    expect(aside?.metrics).toMatchObject({ set_aside: 1, set_aside_rows: 2501 });
    expect(aside?.message).toMatch(/s0=n/);
    expect(r.metrics.set_aside).toBe(1);
  });

  it('an honest action near the floor that happens not to be drawn on a day does not fail that day (B there would read 1 − its share)', () => {
    // x: a at 0.3 (300 of 1000 a day), y: a at 0.002, drawn once in 5 days (500 rows a day; 5 expected). On day 3 the rows of a
    // weigh 300/0.3 = 1000 over 1500 rows: B = 0.667, significant, although every propensity is right.
    const rows: Rows[] = [];
    for (let d = 0; d < 5; d++) {
      rows.push({ segment: ['x'], action: 'a', bucket: d, p: 0.3, count: 300 }, { segment: ['x'], action: 'b', bucket: d, p: 0.7, count: 700 });
      rows.push({ segment: ['y'], action: 'b', bucket: d, p: 0.998, count: d === 0 ? 499 : 500 });
    }
    rows.push({ segment: ['y'], action: 'a', bucket: 0, p: 0.002 });
    const r = run(rows, { days: 5 });
    expect(r.status).toBe('warn');
    expect(r.metrics.failing).toBe(0);
    expect(r.findings.find((x) => x.status === 'warn')?.metrics.set_aside_rows).toBe(2500);
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

  /**
   * 4 regions × 3 devices × 10 days, policy v1 on days 0–4 and v2 after; a logged 40 times in 200 rows at p = 0.2, b 160 times
   * at 0.8 (counts exactly as expected, B = 1). From the switch, v2 logs half of a's propensity everywhere (B = 40 · 10 / 200 = 2);
   * with `stale`, region r2 logs a at 0.1 on every day under both versions (its own defect, as a stale propensity would be).
   */
  const wholeVersion = (stale = false): Rows[] => {
    const rows: Rows[] = [];
    for (let d = 0; d < 10; d++) for (const r of ['r1', 'r2', 'r3', 'r4']) for (const v of ['d1', 'd2', 'd3']) {
      const version = d < 5 ? 'v1' : 'v2';
      const halved = version === 'v2' || (stale && r === 'r2');
      rows.push({ segment: [r, v], action: 'a', bucket: d, version, p: halved ? 0.1 : 0.2, count: 40 });
      rows.push({ segment: [r, v], action: 'b', bucket: d, version, p: 0.8, count: 160 });
    }
    return rows;
  };

  it('a defect of one version in every segment is named as that action × version with no segment, not one group per segment value', () => {
    const r = run(wholeVersion(), { days: 10, versions: true, segmentColumns: ['region', 'device'] });
    expect(r.status).toBe('fail');
    const first = r.findings[0]!;
    expect(first.action).toBe('a');
    expect(first.segment).toEqual({});
    expect(first.metrics.scope).toBe('policy version');
    expect(first.metrics.version).toBe('v2');
    // every v2 row logs a at half its probability: B = 2 by construction
    expect(first.metrics.balance).toBeCloseTo(2, 12);
    // days 5–9: bucket 5 starts 2026-01-06, the log ends where bucket 10 would start
    expect(first.window).toEqual({ from: '2026-01-06T00:00:00.000Z', to: '2026-01-11T00:00:00.000Z' });
    expect(first.metrics.accounts_for).toBe(r.metrics.failing);
    expect(r.metrics.groups).toBe(1);
    expect(r.summary).toMatch(/worst: a in all rows, policy v2, from 2026-01-06 to 2026-01-11: B = 2 /);
  });

  it('with a second, whole-log defect in one region, that region is named over both versions once the version\'s rows are accounted for', () => {
    // r2 under v2 is as off as every v2 row, so after a × v2 (every segment) what is left of r2 is its v1 rows: r2 and r2 × v1 account
    // for the same rows and tests, and r2 alone says so with fewer restrictions (and its window is the whole log, where it was planted)
    const r = run(wholeVersion(true), { days: 10, versions: true, segmentColumns: ['region', 'device'] });
    const failing = r.findings.filter((f) => f.status === 'fail');
    expect(failing.map((f) => [f.action, f.segment, f.metrics.version ?? null])).toEqual(expect.arrayContaining([['a', {}, 'v2'], ['a', { region: 'r2' }, null]]));
    expect(r.metrics.groups).toBe(2);
    const region = failing.find((f) => f.segment.region === 'r2')!;
    // r2 logs a at 0.1 on every row: B = 2 by construction, over days 0–9
    expect(region.metrics.balance).toBeCloseTo(2, 12);
    expect(region.window).toEqual({ from: '2026-01-01T00:00:00.000Z', to: '2026-01-11T00:00:00.000Z' });
    expect(failing.reduce((s, f) => s + (f.metrics.accounts_for as number), 0)).toBe(r.metrics.failing);
  });

  describe('the effect size is the bias a deviation could put into a primary target\'s IPS estimate: |B − 1| · target mass · R (Dudík, Langford & Li 2011, Theorem 1)', () => {
    /** `segments` segments of 200 rows, a and b at p = 0.5, reward 1 on a and 0 on b (R = 1); s0 logs a 150 times (B = 1.5). */
    const sparse = (segments: number, r = 1): Rows[] => Array.from({ length: segments }, (_, i) => [
      { segment: [`s${i}`], action: 'a', p: 0.5, r, count: i === 0 ? 150 : 100 },
      { segment: [`s${i}`], action: 'b', p: 0.5, r: 0, count: i === 0 ? 50 : 100 },
    ]).flat();
    // 400 segments: uniform puts mass (200/80000) · 0.5 = 0.00125 on s0's rows of a, so the bound is 0.5 · 0.00125 · 1 = 0.000625.
    // IPS of uniform has w = 1 on every row: SE = sqrt((40050 − 40050²/80000) / 79999 / 80000) = 0.0017678 (sample SD of r over √n).
    const se = Math.sqrt((40050 - 40050 ** 2 / 80000) / 79999 / 80000);
    it.each<{ name: string; settings: Record<string, number>; r: number; status: string }>([
      { name: 'below 0.5 SE (the default): a significant but harmless deviation passes', settings: {}, r: 1, status: 'pass' },
      { name: 'above 0.25 SE: the same deviation fails', settings: { 'balance.max_bias_se': 0.25 }, r: 1, status: 'fail' },
      { name: 'a reward that is 0 on every row gives no scale: significance alone decides', settings: {}, r: 0, status: 'fail' },
    ])('$name', ({ settings, r, status }) => {
      const res = run(sparse(400, r), { settings });
      expect(res.status).toBe(status);
      expect(res.metrics.significant as number).toBeGreaterThan(0);
      const f = res.findings.find((x) => x.status === 'fail');
      if (status === 'fail' && r === 1) {
        expect(f?.metrics.bias_bound as number).toBeCloseTo(0.000625, 12);
        expect(f?.metrics.bias_tolerance as number).toBeCloseTo(0.25 * se, 9);
      }
      if (status === 'pass') expect(res.summary).toMatch(/deviate significantly, each too little/);
      if (r === 0) expect(res.summary).toMatch(/no scale/);
    });

    it('a 5% deviation on every row fails, though |B − 1| = 0.05 is below the 0.1 the rule used to require', () => {
      // 100,000 rows at p = 0.5 for both actions, a drawn 47,500 times: B = 0.95; exact z ≈ −15.8. Bound 0.05 · 0.5 · 1 = 0.025.
      const r = run([{ action: 'a', p: 0.5, r: 1, count: 47500 }, { action: 'b', p: 0.5, r: 0, count: 52500 }]);
      expect(r.status).toBe('fail');
      const f = r.findings.find((x) => x.action === 'a')!;
      expect(f.metrics.balance).toBeCloseTo(0.95, 12);
      expect(f.metrics.bias_bound as number).toBeCloseTo(0.025, 12);
    });

    it.each([
      { target: 'uniform', status: 'fail' },
      { target: 'always:b', status: 'pass' },
    ])('a mis-logged action matters only to a target that picks it: a\'s p logged half its true value, primary target $target → $status', ({ target, status }) => {
      // a: 1000 rows logged at p = 0.25 though drawn at 0.5 (B = 4000/2000 = 2); b: 1000 rows at 0.5 (B = 1). always:b puts no mass on a.
      const rows: Rows[] = [{ action: 'a', p: 0.25, r: 1, count: 1000 }, { action: 'b', p: 0.5, r: 0, count: 1000 }];
      expect(run(rows, { targets: [{ spec: target }] }).status).toBe(status);
    });
  });

  it('a capped list says what it leaves out: 30 independent groups, 25 listed, findings_not_listed = 5', () => {
    // 10 segments log a 500 of 1000 times at p = 0.25 (B = 2000/1000 = 2), 20 log it 250 times at p = 0.5 (B = 500/1000 = 0.5),
    // b balances in each (B = 1); overall a is 30000/30000 = 1, so no wider test explains the segments away.
    // By hand for a B = 2 segment: sum (X - B)^2 = 500*4 + 500*4 = 4000, SE = sqrt(4000/999/1000) = 0.0633, z = 15.8.
    const rows: Rows[] = Array.from({ length: 30 }, (_, i): Rows[] =>
      i % 3 === 0
        ? [{ segment: [`s${i}`], action: 'a', p: 0.25, count: 500 }, { segment: [`s${i}`], action: 'b', p: 0.5, count: 500 }]
        : [{ segment: [`s${i}`], action: 'a', p: 0.5, count: 250 }, { segment: [`s${i}`], action: 'b', p: 0.75, count: 750 }],
    ).flat();
    const r = run(rows);
    expect(r.metrics.groups).toBe(30);
    expect(r.findings.filter((f) => f.status === 'fail')).toHaveLength(25);
    expect(r.metrics.findings_not_listed).toBe(5);
    expect(r.summary).toContain('The findings list the first 25 explaining groups; 5 more are not listed.');
    expect(r.findings.find((f) => f.segment.s0 === 's0')?.metrics.z as number).toBeCloseTo(1 / Math.sqrt(4000 / 999 / 1000), 6);
    // as many groups as the cap: nothing left out, no metric and no sentence
    const fewer = run(rows.filter((x) => !['s1', 's2', 's4', 's5', 's7'].includes(x.segment![0]!)));
    expect(fewer.metrics.groups).toBe(25);
    expect(fewer.metrics.findings_not_listed).toBeUndefined();
    expect(fewer.summary).not.toContain('not listed');
  });
});
