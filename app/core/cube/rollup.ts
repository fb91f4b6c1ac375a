/** Merging cube cells: sums add, minima and maxima combine (cells are mergeable, so parts of a log combine exactly). */
import type { CubeCell, TargetColumnSums } from './types.ts';

export type Totals = Omit<CubeCell, 'segment' | 'action' | 'bucket' | 'version'>;

type Mutable<T> = { -readonly [K in keyof T]: T[K] };
type Accumulator = Mutable<Omit<Totals, 'target'>> & { target: Mutable<TargetColumnSums> | null };

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

/** A fresh accumulator holding acc + c, keys in the order addInto has always produced (sums, minP, maxP, target). */
function started(acc: Totals): Accumulator {
  return {
    n: acc.n, nPInvalid: acc.nPInvalid, nPNull: acc.nPNull, nPNaN: acc.nPNaN, nPNonPositive: acc.nPNonPositive, nPAboveOne: acc.nPAboveOne,
    nPBelowFloor: acc.nPBelowFloor, nPOne: acc.nPOne, nRNull: acc.nRNull, nP: acc.nP, sumInvP: acc.sumInvP, sumInvP2: acc.sumInvP2,
    nRw: acc.nRw, sumInvPRw: acc.sumInvPRw, sumInvP2Rw: acc.sumInvP2Rw, sumR: acc.sumR, sumR2: acc.sumR2, sumRInvP: acc.sumRInvP,
    sumRInvP2: acc.sumRInvP2, sumR2InvP2: acc.sumR2InvP2, nRAll: acc.nRAll, sumRAll: acc.sumRAll, sumR2All: acc.sumR2All,
    minP: acc.minP, maxP: acc.maxP, target: acc.target ? { ...acc.target } : null,
  };
}

/** acc += c in place; the same additions, in the same order, as addInto. */
function accumulate(acc: Accumulator, c: Totals): void {
  acc.n += c.n;
  acc.nPInvalid += c.nPInvalid;
  acc.nPNull += c.nPNull;
  acc.nPNaN += c.nPNaN;
  acc.nPNonPositive += c.nPNonPositive;
  acc.nPAboveOne += c.nPAboveOne;
  acc.nPBelowFloor += c.nPBelowFloor;
  acc.nPOne += c.nPOne;
  acc.nRNull += c.nRNull;
  acc.nP += c.nP;
  acc.sumInvP += c.sumInvP;
  acc.sumInvP2 += c.sumInvP2;
  acc.nRw += c.nRw;
  acc.sumInvPRw += c.sumInvPRw;
  acc.sumInvP2Rw += c.sumInvP2Rw;
  acc.sumR += c.sumR;
  acc.sumR2 += c.sumR2;
  acc.sumRInvP += c.sumRInvP;
  acc.sumRInvP2 += c.sumRInvP2;
  acc.sumR2InvP2 += c.sumR2InvP2;
  acc.nRAll += c.nRAll;
  acc.sumRAll += c.sumRAll;
  acc.sumR2All += c.sumR2All;
  acc.minP = acc.minP === null ? c.minP : c.minP === null ? acc.minP : Math.min(acc.minP, c.minP);
  acc.maxP = acc.maxP === null ? c.maxP : c.maxP === null ? acc.maxP : Math.max(acc.maxP, c.maxP);
  const a = acc.target;
  const t = c.target;
  if (a && t) {
    a.nInvalid += t.nInvalid;
    a.sumW += t.sumW;
    a.sumW2 += t.sumW2;
    a.sumWRw += t.sumWRw;
    a.sumW2Rw += t.sumW2Rw;
    a.sumWR += t.sumWR;
    a.sumW2R += t.sumW2R;
    a.sumW2R2 += t.sumW2R2;
  } else if (!a && t) acc.target = { ...t };
}

export function addInto(acc: Totals, c: Totals): Totals {
  const out = started(acc);
  accumulate(out, c);
  return out;
}

export function total(cells: readonly CubeCell[]): Totals {
  if (cells.length === 0) return emptyTotals(false);
  const acc = started(emptyTotals(cells.some((c) => c.target !== null)));
  for (const c of cells) accumulate(acc, c);
  return acc;
}

/** Groups cells by a key and merges each group; keeps first-seen order of keys. */
export function rollup<K>(cells: readonly CubeCell[], key: (c: CubeCell, index: number) => string, meta: (c: CubeCell) => K): { key: string; meta: K; totals: Totals }[] {
  const groups = new Map<string, { key: string; meta: K; totals: Accumulator }>();
  const empty = emptyTotals(cells.some((c) => c.target !== null));
  for (let i = 0; i < cells.length; i++) {
    const c = cells[i] as CubeCell;
    const k = key(c, i);
    let g = groups.get(k);
    if (!g) {
      g = { key: k, meta: meta(c), totals: started(empty) };
      groups.set(k, g);
    }
    accumulate(g.totals, c);
  }
  return [...groups.values()];
}

export const SEP = '\u001f';
export const segmentKey = (values: readonly string[]): string => values.join(SEP);
export const cellKey = (c: CubeCell): string => `${segmentKey(c.segment)}${SEP}${SEP}${c.action}`;

interface KeyNode {
  readonly next: Map<string, KeyNode>;
  segment?: string;
  readonly cell: Map<string, string>;
}

/**
 * segmentKey and cellKey of every cell, aligned with `cells`: each key string is built once per
 * distinct segment (and action) and shared, so the many cells of one segment cost map lookups, not joins.
 */
export function cellKeys(cells: readonly CubeCell[]): { segment: string[]; cell: string[] } {
  const root: KeyNode = { next: new Map(), cell: new Map() };
  const segment = new Array<string>(cells.length);
  const cell = new Array<string>(cells.length);
  for (let i = 0; i < cells.length; i++) {
    const c = cells[i] as CubeCell;
    let node = root;
    for (const v of c.segment) {
      let n = node.next.get(v);
      if (!n) node.next.set(v, (n = { next: new Map(), cell: new Map() }));
      node = n;
    }
    const s = (node.segment ??= segmentKey(c.segment));
    let k = node.cell.get(c.action);
    if (k === undefined) node.cell.set(c.action, (k = `${s}${SEP}${SEP}${c.action}`));
    segment[i] = s;
    cell[i] = k;
  }
  return { segment, cell };
}

/** key(a, b) built once per distinct pair, so a loop over cells hashes strings it already has instead of new ones. */
export function pairKeys(key: (a: string, b: string) => string): (a: string, b: string) => string {
  const made = new Map<string, Map<string, string>>();
  return (a, b) => {
    let inner = made.get(a);
    if (!inner) made.set(a, (inner = new Map()));
    let k = inner.get(b);
    if (k === undefined) inner.set(b, (k = key(a, b)));
    return k;
  };
}
