/**
 * Locating a defect: which segment values and which time window concentrate the affected rows.
 * Findings name the coarsest segment pattern that explains them, not every sub-segment.
 */
import type { CubeCell } from '../cube/types.ts';

export interface PatternItem<T> {
  /** values per column, in column order */
  readonly values: readonly string[];
  readonly flagged: boolean;
  readonly payload: T;
}

export interface Pattern<T> {
  /** values per column; "*" where the pattern leaves a column free */
  readonly values: readonly string[];
  readonly items: readonly T[];
}

const FREE = '*';
const MAX_PATTERN_COLUMNS = 8;

/**
 * Greedy cover of flagged items by patterns that match only flagged items, fewest fixed columns
 * first, largest cover first; items a pattern would share with an unflagged item stay as their own
 * full pattern.
 */
export function coverByPatterns<T>(items: readonly PatternItem<T>[]): Pattern<T>[] {
  const flagged = items.filter((i) => i.flagged);
  if (flagged.length === 0) return [];
  const width = flagged[0]!.values.length;
  if (width > MAX_PATTERN_COLUMNS) return flagged.map((i) => ({ values: i.values, items: [i.payload] }));
  const key = (v: readonly string[]) => v.join('\u001f');
  // Every pattern an item matches is one of its 2^width masks, so the covers and the patterns touching
  // an unflagged item are read off those masks in one pass each (linear in the items, not quadratic).
  const masks = (v: readonly string[]): string[][] => {
    const out: string[][] = [];
    for (let mask = 0; mask < 1 << width; mask++) out.push(v.map((x, j) => (mask & (1 << j) ? x : FREE)));
    return out;
  };
  const candidates = new Map<string, { p: readonly string[]; cover: PatternItem<T>[] }>();
  for (const it of flagged) {
    for (const p of masks(it.values)) {
      const k = key(p);
      const c = candidates.get(k);
      if (c) { if (c.cover[c.cover.length - 1] !== it) c.cover.push(it); }
      else candidates.set(k, { p, cover: [it] });
    }
  }
  const touched = new Set<string>();
  for (const it of items) if (!it.flagged) for (const p of masks(it.values)) touched.add(key(p));
  const pure = [...candidates].filter(([k]) => !touched.has(k)).map(([, c]) => c);
  const fixed = (p: readonly string[]) => p.filter((x) => x !== FREE).length;
  const out: Pattern<T>[] = [];
  const covered = new Set<PatternItem<T>>();
  const ranked = pure
    .sort((a, b) => fixed(a.p) - fixed(b.p) || b.cover.length - a.cover.length || key(a.p).localeCompare(key(b.p)));
  for (const { p, cover } of ranked) {
    const fresh = cover.filter((i) => !covered.has(i));
    if (fresh.length === 0 || fresh.length < cover.length) continue;
    fresh.forEach((i) => covered.add(i));
    out.push({ values: p, items: fresh.map((i) => i.payload) });
    if (covered.size === flagged.length) break;
  }
  for (const i of flagged) if (!covered.has(i)) out.push({ values: i.values, items: [i.payload] });
  return out;
}

/** Runs of consecutive bucket indexes, as [first, lastInclusive]. */
export function runs(buckets: readonly number[]): [number, number][] {
  const sorted = [...new Set(buckets)].sort((a, b) => a - b);
  const out: [number, number][] = [];
  for (const b of sorted) {
    const last = out[out.length - 1];
    if (last && b === last[1] + 1) last[1] = b;
    else out.push([b, b]);
  }
  return out;
}

export interface Concentration {
  /** column index, or -1 for "all rows" */
  readonly column: number;
  readonly value: string | null;
  readonly bad: number;
  readonly rows: number;
  /** bucket runs where this group's bad share is high */
  readonly windows: readonly [number, number][];
}

/**
 * Where do the bad rows (counted per cell by `bad`) concentrate? Picks single segment values that
 * hold most bad rows at a clearly higher rate than elsewhere, then the buckets where that group's bad
 * share is at least half its worst bucket's.
 */
export function concentrate(cells: readonly CubeCell[], columns: number, bad: (c: CubeCell) => number, denominator: (c: CubeCell) => number = (c) => c.n): Concentration[] {
  const totalBad = cells.reduce((s, c) => s + bad(c), 0);
  const totalRows = cells.reduce((s, c) => s + denominator(c), 0);
  if (totalBad === 0) return [];
  const overall = totalBad / Math.max(1, totalRows);
  const picks: { column: number; value: string | null; bad: number; rows: number }[] = [];
  let explained = 0;
  const groups: { column: number; value: string; bad: number; rows: number }[] = [];
  for (let j = 0; j < columns; j++) {
    const m = new Map<string, { bad: number; rows: number }>();
    for (const c of cells) {
      const v = c.segment[j] as string;
      const g = m.get(v) ?? { bad: 0, rows: 0 };
      g.bad += bad(c);
      g.rows += denominator(c);
      m.set(v, g);
    }
    for (const [value, g] of m) groups.push({ column: j, value, ...g });
  }
  groups.sort((a, b) => b.bad / Math.max(1, b.rows) - a.bad / Math.max(1, a.rows) || b.bad - a.bad);
  for (const g of groups) {
    const rate = g.bad / Math.max(1, g.rows);
    if (g.bad >= 0.1 * totalBad && rate >= 2 * overall && explained < 0.9 * totalBad) {
      if (picks.some((p) => p.column === g.column)) continue;
      picks.push(g);
      explained += g.bad;
    }
  }
  if (picks.length === 0 || explained < 0.5 * totalBad) picks.splice(0, picks.length, { column: -1, value: null, bad: totalBad, rows: totalRows });
  return picks.map((p) => {
    const inGroup = (c: CubeCell) => p.column < 0 || c.segment[p.column] === p.value;
    const byBucket = new Map<number, { bad: number; rows: number }>();
    for (const c of cells) {
      if (!inGroup(c) || c.bucket < 0) continue;
      const g = byBucket.get(c.bucket) ?? { bad: 0, rows: 0 };
      g.bad += bad(c);
      g.rows += denominator(c);
      byBucket.set(c.bucket, g);
    }
    let peak = 0;
    for (const g of byBucket.values()) peak = Math.max(peak, g.bad / Math.max(1, g.rows));
    const hot = [...byBucket.entries()].filter(([, g]) => g.bad > 0 && g.bad / Math.max(1, g.rows) >= 0.5 * peak).map(([b]) => b);
    return { ...p, windows: runs(hot) };
  });
}
