import { describe, expect, it } from 'vitest';
import { bestChangePoint } from '../../../app/core/stats/changepoint.ts';
import type { GroupMoments } from '../../../app/core/stats/moments.ts';

function moments(values: readonly number[]): GroupMoments {
  return { n: values.length, sum: values.reduce((s, v) => s + v, 0), sumSq: values.reduce((s, v) => s + v * v, 0) };
}

function ss(values: readonly number[]): number {
  const m = values.reduce((s, v) => s + v, 0) / values.length;
  return values.reduce((s, v) => s + (v - m) ** 2, 0);
}

// Binary rewards per time bucket: rate 0.10 for buckets 0..4, 0.15 from bucket 5 on (deterministic pattern).
function bucket(rate: number, n: number, phase: number): number[] {
  return Array.from({ length: n }, (_, i) => (((i * 37 + phase) % n) < rate * n ? 1 : 0));
}
const rates = [0.1, 0.1, 0.1, 0.1, 0.1, 0.15, 0.15, 0.15, 0.15];
const buckets = rates.map((r, b) => bucket(r, 200 + 20 * b, b));

describe('bestChangePoint', () => {
  it('finds the constructed change at bucket 5 with a 50% relative increase', () => {
    const cp = bestChangePoint(buckets.map(moments));
    expect(cp?.index).toBe(5);
    expect(cp?.meanBefore).toBeCloseTo(0.1, 12);
    expect(cp?.meanAfter).toBeCloseTo(0.15, 12);
    expect(cp?.relativeChange).toBeCloseTo(0.5, 12);
  });

  it('maximizes total SS minus within-segment SS computed from the raw values (least squares, Hinkley 1970)', () => {
    const all = buckets.flat();
    const total = ss(all);
    const gains = buckets.slice(1).map((_, i) => total - ss(buckets.slice(0, i + 1).flat()) - ss(buckets.slice(i + 1).flat()));
    const argmax = gains.indexOf(Math.max(...gains)) + 1;
    const cp = bestChangePoint(buckets.map(moments));
    expect(cp?.index).toBe(argmax);
    expect(cp?.betweenSs).toBeCloseTo(gains[argmax - 1] as number, 10);
    expect(cp?.totalSs).toBeCloseTo(total, 10);
  });

  it('skips empty buckets and never splits off an empty side', () => {
    const empty = { n: 0, sum: 0, sumSq: 0 };
    const cp = bestChangePoint([empty, moments([1, 1, 1]), empty, empty, moments([3, 3]), empty]);
    expect(cp?.index).toBe(2);
    expect(cp?.meanBefore).toBe(1);
    expect(cp?.meanAfter).toBe(3);
    expect(cp?.relativeChange).toBe(2);
  });

  it('returns null with fewer than two non-empty groups', () => {
    expect(bestChangePoint([])).toBeNull();
    expect(bestChangePoint([moments([1, 2]), { n: 0, sum: 0, sumSq: 0 }])).toBeNull();
  });

  it('reports an infinite relative change from a zero mean', () => {
    expect(bestChangePoint([moments([0, 0]), moments([1, 1])])?.relativeChange).toBe(Infinity);
    expect(bestChangePoint([moments([0, 0]), moments([0, 0])])?.relativeChange).toBe(0);
  });

  it('rejects malformed groups', () => {
    expect(() => bestChangePoint([moments([1]), { n: -1, sum: 0, sumSq: 0 }])).toThrow(/group 1 n/);
  });
});
