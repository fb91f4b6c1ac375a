/** Merging cube cells: sums add, minima and maxima combine (DESIGN.md §4: cells are mergeable). */
import type { CubeCell, TargetColumnSums } from './types.ts';

export type Totals = Omit<CubeCell, 'segment' | 'action' | 'bucket' | 'version'>;

const SUM_FIELDS = [
  'n', 'nPInvalid', 'nPNull', 'nPNaN', 'nPNonPositive', 'nPAboveOne', 'nPBelowFloor', 'nPOne', 'nRNull', 'nP', 'sumInvP', 'sumInvP2',
  'nRw', 'sumInvPRw', 'sumInvP2Rw', 'sumR', 'sumR2', 'sumRInvP', 'sumRInvP2', 'sumR2InvP2', 'nRAll', 'sumRAll', 'sumR2All',
] as const;
const TARGET_FIELDS = ['nInvalid', 'sumW', 'sumW2', 'sumWRw', 'sumW2Rw', 'sumWR', 'sumW2R', 'sumW2R2'] as const;

export function emptyTotals(withTarget: boolean): Totals {
  const t: Record<string, unknown> = { minP: null, maxP: null, target: withTarget ? Object.fromEntries(TARGET_FIELDS.map((f) => [f, 0])) : null };
  for (const f of SUM_FIELDS) t[f] = 0;
  return t as unknown as Totals;
}

export function addInto(acc: Totals, c: Totals): Totals {
  const out: Record<string, unknown> = {};
  for (const f of SUM_FIELDS) out[f] = acc[f] + c[f];
  out.minP = acc.minP === null ? c.minP : c.minP === null ? acc.minP : Math.min(acc.minP, c.minP);
  out.maxP = acc.maxP === null ? c.maxP : c.maxP === null ? acc.maxP : Math.max(acc.maxP, c.maxP);
  if (acc.target && c.target) {
    const t: Record<string, number> = {};
    for (const f of TARGET_FIELDS) t[f] = acc.target[f] + c.target[f];
    out.target = t as unknown as TargetColumnSums;
  } else out.target = acc.target ?? c.target;
  return out as unknown as Totals;
}

export function total(cells: readonly CubeCell[]): Totals {
  let acc = emptyTotals(cells.some((c) => c.target !== null));
  for (const c of cells) acc = addInto(acc, c);
  return acc;
}

/** Groups cells by a key and merges each group; keeps first-seen order of keys. */
export function rollup<K>(cells: readonly CubeCell[], key: (c: CubeCell) => string, meta: (c: CubeCell) => K): { key: string; meta: K; totals: Totals }[] {
  const groups = new Map<string, { key: string; meta: K; totals: Totals }>();
  const withTarget = cells.some((c) => c.target !== null);
  for (const c of cells) {
    const k = key(c);
    let g = groups.get(k);
    if (!g) {
      g = { key: k, meta: meta(c), totals: emptyTotals(withTarget) };
      groups.set(k, g);
    }
    g.totals = addInto(g.totals, c);
  }
  return [...groups.values()];
}

export const SEP = '\u001f';
export const segmentKey = (values: readonly string[]): string => values.join(SEP);
export const cellKey = (c: CubeCell): string => `${segmentKey(c.segment)}${SEP}${SEP}${c.action}`;
