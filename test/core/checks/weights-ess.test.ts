/** weights.ess from hand-written rows; Kish ESS = (Σw)²/Σw² (Kish 1965), values computed by hand or with numpy as stated. */
import { describe, expect, it } from 'vitest';
import { weightsEss } from '../../../app/core/checks/weights-ess.ts';
import { contextOf, grid, type Rows } from './build.ts';

describe('weights.ess', () => {
  it('issue acceptance: all-ones weights (uniform logging over 4 actions, uniform target) give Kish ESS = n exactly, and a pass', () => {
    const r = weightsEss.run(contextOf(grid([['x']], ['a', 'b', 'c', 'd'], () => 0.25, () => 250), { targets: [{ spec: 'uniform' }] }));
    expect(r.status).toBe('pass');
    expect(r.metrics['uniform.ess']).toBe(1000);
    expect(r.metrics['uniform.ess_fraction']).toBe(1);
  });

  it('issue acceptance: ε-greedy over 3 actions, ε = 0.1, uniform target: mean weight 1 and ESS/n = 0.147', () => {
    // numpy: w = r_[full(2800, (1/3)/(0.9 + 0.1/3)), full(200, (1/3)/(0.1/3))]; w.mean() = 1.0; w.sum()**2/(w**2).sum()/3000 = 0.14736842105263154
    const rows: Rows[] = [{ action: 'a0', p: 0.9 + 0.1 / 3, count: 2800 }, { action: 'a1', p: 0.1 / 3, count: 100 }, { action: 'a2', p: 0.1 / 3, count: 100 }];
    const ctx = contextOf(rows, { targets: [{ spec: 'uniform' }] });
    expect(ctx.targets[0]!.sumW / ctx.targets[0]!.n).toBeCloseTo(1, 12);
    const r = weightsEss.run(ctx);
    expect(r.metrics['uniform.ess_fraction'] as number).toBeCloseTo(0.14736842105263154, 12);
    expect(r.status).toBe('pass');
  });

  it('segment ESS uses the segment\'s own Σw²: only the thin segment warns', () => {
    // always:a. Segment x: 400 rows of a at p = 0.5 (w = 2) and 400 of b: Σw = 800, Σw² = 1600, ESS = 400.
    // Segment y: 2 rows of a at p = 0.01 (w = 100) and 198 of b: Σw = 200, Σw² = 20000, ESS = 2 (by hand).
    const rows: Rows[] = [
      { segment: ['x'], action: 'a', p: 0.5, count: 400 }, { segment: ['x'], action: 'b', p: 0.5, count: 400 },
      { segment: ['y'], action: 'a', p: 0.01, count: 2 }, { segment: ['y'], action: 'b', p: 0.99, count: 198 },
    ];
    const r = weightsEss.run(contextOf(rows, { targets: [{ spec: 'always:a' }] }));
    const warned = r.findings.filter((f) => Object.keys(f.segment).length > 0);
    expect(warned.map((f) => f.segment)).toEqual([{ s0: 'y' }]);
    expect(warned[0]!.metrics.ess).toBeCloseTo(2, 12);
    const bars = r.series!.find((s) => s.name === 'ESS by segment: always:a')!;
    expect(bars.values[0]).toEqual([400, 2]);
  });

  it('the top 1% of rows: 10 rows of weight 50 among 1000 hold 500/680 of Σw (by hand)', () => {
    // always:a: 10 rows of a at p = 0.02 (w = 50), 90 rows of a at p = 0.5 (w = 2), 900 rows of b; Σw = 500 + 180 = 680.
    const rows: Rows[] = [{ action: 'a', p: 0.02, count: 10 }, { action: 'a', p: 0.5, count: 90 }, { action: 'b', p: 0.5, count: 900 }];
    const r = weightsEss.run(contextOf(rows, { targets: [{ spec: 'always:a' }] }));
    const f = r.findings.find((x) => x.target === 'always:a' && Object.keys(x.segment).length === 0)!;
    expect(f.metrics.top1_weight_share as number).toBeCloseTo(500 / 680, 12);
    expect(f.metrics.max_weight).toBe(50);
  });

  it.each([
    // ESS = n·(ESS/n); thresholds: warn below 10% of rows, fail below 100 (the check's defaults)
    { name: 'fail below 100', n: 80, status: 'fail' },
    { name: 'pass at 100 rows of weight 1', n: 100, status: 'pass' },
  ])('thresholds: $name', ({ n, status }) => {
    const r = weightsEss.run(contextOf([{ action: 'a', p: 1, count: n }], { targets: [{ spec: 'always:a' }] }));
    expect(r.status).toBe(status);
  });
});
