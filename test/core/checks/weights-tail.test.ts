/** weights.tail from hand-written rows: k̂ against loo 2.5.1 (test/reference/psis/fixtures.json, made by make-fixtures.R). */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { weightsTail } from '../../../app/core/checks/weights-tail.ts';
import { contextOf, grid, type Rows } from './build.ts';

const psis = JSON.parse(readFileSync(new URL('../../reference/psis/fixtures.json', import.meta.url), 'utf8')) as { cases: { name: string; S: number; paretoK: number | null; logRatios: number[] }[] };

/** Rows whose weights under always:a are exp(log ratio − min): k̂ does not depend on the scale of the weights. */
function rowsOf(logRatios: readonly number[]): Rows[] {
  const min = Math.min(...logRatios);
  return logRatios.map((lr) => ({ action: 'a', p: Math.exp(min - lr) }));
}

describe('weights.tail', () => {
  it('uniform logging with the uniform target: every weight is 1, the tail is bounded (k̂ = −∞), a pass', () => {
    const r = weightsTail.run(contextOf(grid([['x']], ['a', 'b', 'c'], () => 1 / 3, () => 400), { targets: [{ spec: 'uniform' }] }));
    expect(r.status).toBe('pass');
    expect(r.metrics['uniform.tail']).toBe('bounded');
    expect(r.summary).toMatch(/k̂ = bounded/);
  });

  it('ε-greedy (two weight values) is bounded: a pass', () => {
    const rows: Rows[] = [{ action: 'a0', p: 0.9 + 0.1 / 3, count: 2800 }, { action: 'a1', p: 0.1 / 3, count: 100 }, { action: 'a2', p: 0.1 / 3, count: 100 }];
    const r = weightsTail.run(contextOf(rows, { targets: [{ spec: 'uniform' }] }));
    expect(r.status).toBe('pass');
    expect(r.metrics['uniform.tail']).toBe('bounded');
  });

  it.each([
    // k̂ from loo::psis; status by the check's thresholds: warn above 0.5, fail above min(1 − 1/log10 S, 0.7)
    { name: 'pareto-0.3', status: 'pass' },
    { name: 'student-t-target', status: 'warn' },
    { name: 'pareto-0.7', status: 'fail' },
    { name: 'pareto-1.2', status: 'fail' },
  ])('heavy but finite tails: $name gives loo\'s k̂ and $status', ({ name, status }) => {
    const c = psis.cases.find((x) => x.name === name)!;
    const r = weightsTail.run(contextOf(rowsOf(c.logRatios), { targets: [{ spec: 'always:a' }] }));
    expect(r.metrics['always:a.khat'] as number).toBeCloseTo(c.paretoK as number, 6);
    expect(r.status).toBe(status);
  });
});
