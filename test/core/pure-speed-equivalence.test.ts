/**
 * The fast paths of the cube's pure part give exactly (bit for bit) what their plain definitions give:
 * merging in place versus folding addInto, shared keys versus joining each cell's values.
 */
import { describe, expect, it } from 'vitest';
import { addInto, cellKey, cellKeys, emptyTotals, pairKeys, rollup, segmentKey, SEP, total, type Totals } from '../../app/core/cube/rollup.ts';
import type { CubeCell, TargetColumnSums } from '../../app/core/cube/types.ts';
import { cubeCell } from '../fixtures/cube-cell.ts';
import { cubeView } from '../../app/core/targets/analysis.ts';

function seeded(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

/** Cells with sums of mixed magnitudes, so a change of summation order would change the last bits. */
function cells(count: number, withTarget: boolean, seed = 7): CubeCell[] {
  const r = seeded(seed);
  const pick = <T>(xs: readonly T[]) => xs[Math.floor(r() * xs.length)] as T;
  const sum = () => (r() < 0.5 ? r() * 1e-3 : r() * 1e6) + r();
  return Array.from({ length: count }, (): CubeCell => {
    const target: TargetColumnSums | null = withTarget && r() < 0.8 ? { nInvalid: 1, sumW: sum(), sumW2: sum(), sumWRw: sum(), sumW2Rw: sum(), sumWR: sum(), sumW2R: sum(), sumW2R2: sum() } : null;
    const p = r() < 0.1 ? null : r();
    return cubeCell({
      // a value holding the separator makes two different segments join to the same key
      segment: [pick(['north', 'south', `a${SEP}b`, 'a']), pick(['ios', 'web', `b${SEP}ios`])],
      action: pick(['free-delivery', 'bundle', '10-off']),
      bucket: Math.floor(r() * 5),
      version: pick(['v7', 'v8']),
      n: 10, nPNull: 1, nPNaN: 0, nPNonPositive: 1, nPAboveOne: 0, nPBelowFloor: 1, nPInvalid: 2, nPOne: 1, nRNull: 1, nP: 8,
      sumInvP: sum(), sumInvP2: sum(), minP: p, maxP: p === null ? null : Math.min(1, p + r()),
      nRw: 7, sumInvPRw: sum(), sumInvP2Rw: sum(), sumR: sum(), sumR2: sum(), sumRInvP: sum(), sumRInvP2: sum(), sumR2InvP2: sum(),
      nRAll: 9, sumRAll: sum(), sumR2All: sum(), sumD: sum(), sumD2: sum(), sumDInvP: sum(), sumDInvP2: sum(), sumD2InvP: sum(), sumD2InvP2: sum(), sumDAll: sum(), sumD2All: sum(), target,
    });
  });
}

const fold = (cs: readonly CubeCell[]): Totals => cs.reduce<Totals>((acc, c) => addInto(acc, c), emptyTotals(cs.some((c) => c.target !== null)));

describe('merging cube cells in place', () => {
  it.each([false, true])('total equals the left fold of addInto, bit for bit (target column: %s)', (withTarget) => {
    const cs = cells(500, withTarget);
    expect(JSON.stringify(total(cs))).toBe(JSON.stringify(fold(cs)));
  });

  it('rollup gives each group the left fold of its cells, groups in first-seen order', () => {
    const cs = cells(800, true, 11);
    const groups = rollup(cs, (c) => c.action, (c) => c.action);
    const firstSeen = [...new Set(cs.map((c) => c.action))];
    expect(groups.map((g) => g.key)).toEqual(firstSeen);
    for (const g of groups) expect(JSON.stringify(g.totals)).toBe(JSON.stringify(fold(cs.filter((c) => c.action === g.key))));
  });

  it('leaves its inputs unchanged', () => {
    const cs = cells(50, true, 3);
    const before = JSON.stringify(cs);
    total(cs);
    rollup(cs, (c) => c.version, () => null);
    addInto(cs[0] as CubeCell, cs[1] as CubeCell);
    expect(JSON.stringify(cs)).toBe(before);
  });
});

describe('shared keys', () => {
  it('cellKeys gives segmentKey and cellKey of every cell, including segments whose values hold the separator', () => {
    const cs = cells(400, false, 5);
    const keys = cellKeys(cs);
    expect(keys.segment).toEqual(cs.map((c) => segmentKey(c.segment)));
    expect(keys.cell).toEqual(cs.map(cellKey));
    // ['a␟b', 'ios'] and ['a', 'b␟ios'] join to the same key, as they always have
    expect(new Set(keys.segment).size).toBeLessThan(new Set(cs.map((c) => JSON.stringify(c.segment))).size);
  });

  it('pairKeys returns what its key function returns, built once per pair', () => {
    let built = 0;
    const key = pairKeys((a, b) => {
      built++;
      return `${a}${SEP}${b}`;
    });
    const pairs = [['north', 'v7'], ['north', 'v8'], ['north', 'v7'], [`a${SEP}b`, 'c'], ['a', `b${SEP}c`]] as const;
    expect(pairs.map(([a, b]) => key(a, b))).toEqual(pairs.map(([a, b]) => `${a}${SEP}${b}`));
    expect(built).toBe(4);
  });

  it('the view answers segmentKeyOf and total for its cube', () => {
    const cs = cells(300, true, 9);
    const view = cubeView(cs, ['region', 'device']);
    expect(cs.map(view.segmentKeyOf)).toEqual(cs.map((c) => segmentKey(c.segment)));
    expect(JSON.stringify(view.total)).toBe(JSON.stringify(fold(cs)));
  });
});
