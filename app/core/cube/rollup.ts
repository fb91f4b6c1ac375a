/** Merging cube cells: sums add, minima and maxima combine (cells are mergeable), field lists from measures.ts. */
import { blankTargetSums, blankTotals, MAX_FIELDS, MIN_FIELDS, SUM_FIELDS, TARGET_FIELDS, type ExtremumField, type SumField, type TargetMeasureField } from './measures.ts';
import type { CubeCell } from './types.ts';

export type Totals = Omit<CubeCell, 'segment' | 'action' | 'bucket' | 'version'>;

/*
 * Merging accumulates into one Float64Array (the sums, the minima, the maxima, a flag saying whether
 * target-column sums are present, then those sums): one loop per merge rule over the field lists, and
 * an object is made only once per group. A null minimum or maximum is NaN in the accumulator.
 */
const S = SUM_FIELDS.length;
const MIN_AT = S;
const MAX_AT = MIN_AT + MIN_FIELDS.length;
const FLAG_AT = MAX_AT + MAX_FIELDS.length;
const TARGET_AT = FLAG_AT + 1;
const WIDTH = TARGET_AT + TARGET_FIELDS.length;

/** The packed measures of a cell or totals. */
function packInto(v: Float64Array, c: Totals): Float64Array {
  for (let k = 0; k < S; k++) v[k] = c[SUM_FIELDS[k] as SumField];
  for (let k = 0; k < MIN_FIELDS.length; k++) v[MIN_AT + k] = c[MIN_FIELDS[k] as ExtremumField] ?? NaN;
  for (let k = 0; k < MAX_FIELDS.length; k++) v[MAX_AT + k] = c[MAX_FIELDS[k] as ExtremumField] ?? NaN;
  const t = c.target;
  v[FLAG_AT] = t ? 1 : 0;
  for (let k = 0; k < TARGET_FIELDS.length; k++) v[TARGET_AT + k] = t ? t[TARGET_FIELDS[k] as TargetMeasureField] : 0;
  return v;
}
const packed = (c: Totals): Float64Array => packInto(new Float64Array(WIDTH), c);

/** Totals read back from a packed accumulator, keys in emptyTotals' order. */
function unpacked(v: Float64Array): Totals {
  const out = blankTotals();
  for (let k = 0; k < S; k++) out[SUM_FIELDS[k] as SumField] = v[k];
  for (let k = 0; k < MIN_FIELDS.length; k++) out[MIN_FIELDS[k] as ExtremumField] = Number.isNaN(v[MIN_AT + k]) ? null : v[MIN_AT + k];
  for (let k = 0; k < MAX_FIELDS.length; k++) out[MAX_FIELDS[k] as ExtremumField] = Number.isNaN(v[MAX_AT + k]) ? null : v[MAX_AT + k];
  let target: Record<string, number> | null = null;
  if (v[FLAG_AT] === 1) {
    target = blankTargetSums();
    for (let k = 0; k < TARGET_FIELDS.length; k++) target[TARGET_FIELDS[k] as TargetMeasureField] = v[TARGET_AT + k] as number;
  }
  out.target = target;
  const totals = out as unknown as Totals;
  return totals;
}

/** acc += c in place: sums add, minima and maxima combine (NaN is "none"), target sums add or are taken. */
function accumulate(acc: Float64Array, c: Totals): void {
  for (let k = 0; k < S; k++) (acc[k] as number) += c[SUM_FIELDS[k] as SumField];
  for (let k = 0; k < MIN_FIELDS.length; k++) {
    const a = acc[MIN_AT + k] as number;
    const b = c[MIN_FIELDS[k] as ExtremumField];
    if (b !== null && (a !== a || b < a)) acc[MIN_AT + k] = b;
  }
  for (let k = 0; k < MAX_FIELDS.length; k++) {
    const a = acc[MAX_AT + k] as number;
    const b = c[MAX_FIELDS[k] as ExtremumField];
    if (b !== null && (a !== a || b > a)) acc[MAX_AT + k] = b;
  }
  const t = c.target;
  if (t) {
    if (acc[FLAG_AT] === 1) for (let k = 0; k < TARGET_FIELDS.length; k++) (acc[TARGET_AT + k] as number) += t[TARGET_FIELDS[k] as TargetMeasureField];
    else {
      acc[FLAG_AT] = 1;
      for (let k = 0; k < TARGET_FIELDS.length; k++) acc[TARGET_AT + k] = t[TARGET_FIELDS[k] as TargetMeasureField];
    }
  }
}

const EMPTY = new Float64Array(WIDTH).fill(NaN, MIN_AT, FLAG_AT);

export function emptyTotals(withTarget: boolean): Totals {
  const v = EMPTY.slice();
  if (withTarget) v[FLAG_AT] = 1;
  return unpacked(v);
}

export function addInto(acc: Totals, c: Totals): Totals {
  const out = packed(acc);
  accumulate(out, c);
  return unpacked(out);
}

export function total(cells: readonly CubeCell[]): Totals {
  if (cells.length === 0) return emptyTotals(false);
  const acc = packed(emptyTotals(cells.some((c) => c.target !== null)));
  for (const c of cells) accumulate(acc, c);
  return unpacked(acc);
}

/** Groups cells by a key and merges each group; keeps first-seen order of keys. */
export function rollup<K>(cells: readonly CubeCell[], key: (c: CubeCell, index: number) => string, meta: (c: CubeCell) => K): { key: string; meta: K; totals: Totals }[] {
  const groups = new Map<string, { key: string; meta: K; acc: Float64Array }>();
  const empty = EMPTY.slice();
  if (cells.some((c) => c.target !== null)) empty[FLAG_AT] = 1;
  for (let i = 0; i < cells.length; i++) {
    const c = cells[i] as CubeCell;
    const k = key(c, i);
    let g = groups.get(k);
    if (!g) {
      g = { key: k, meta: meta(c), acc: empty.slice() };
      groups.set(k, g);
    }
    accumulate(g.acc, c);
  }
  return [...groups.values()].map((g) => ({ key: g.key, meta: g.meta, totals: unpacked(g.acc) }));
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
