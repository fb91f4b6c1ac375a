/**
 * Everything the audit needs to know about one target policy, computed from the cube alone:
 * weight sums overall and by segment, unsupported probability mass, and the estimator cells.
 * For a target given per (segment, action), w = q(s, a)/p, so Σw = q·Σ1/p and Σw² = q²·Σ1/p² per cell
 * (DEVELOPERS.md, "The scans of one audit").
 */
import { cellKeys, rollup, segmentKey, SEP, total, type Totals } from '../cube/rollup.ts';
import type { CubeCell, EstimatorCell } from '../cube/types.ts';
import { NULL_LABEL } from '../scan/expressions.ts';
import type { TargetPolicy } from './targets.ts';

export interface SegmentActionCell {
  readonly segment: readonly string[];
  readonly action: string;
  readonly totals: Totals;
}

export interface SegmentTotals {
  readonly segment: readonly string[];
  readonly totals: Totals;
}

/** The cube rolled up over time and version: the grain of support, weights and estimates. */
export interface CubeView {
  readonly segmentColumns: readonly string[];
  readonly cells: readonly SegmentActionCell[];
  readonly segments: readonly SegmentTotals[];
  readonly actions: readonly string[];
  readonly rows: number;
  /** segmentKey(c.segment) of a cube cell, joined once per cell of the view's cube */
  readonly segmentKeyOf: (c: CubeCell) => string;
  /** total(cells) of the view's cube */
  readonly total: Totals;
}

export function cubeView(cells: readonly CubeCell[], segmentColumns: readonly string[]): CubeView {
  const keys = cellKeys(cells);
  const index = new Map<CubeCell, number>();
  cells.forEach((c, i) => index.set(c, i));
  const segmentKeyOf = (c: CubeCell) => {
    const i = index.get(c);
    return i === undefined ? segmentKey(c.segment) : (keys.segment[i] as string);
  };
  const sa = rollup(cells, (_c, i) => keys.cell[i] as string, (c) => ({ segment: c.segment, action: c.action }));
  const seg = rollup(cells, (_c, i) => keys.segment[i] as string, (c) => c.segment);
  const actions = [...new Set(cells.map((c) => c.action))].filter((a) => a !== NULL_LABEL).sort();
  const rows = seg.reduce((s, g) => s + g.totals.n, 0);
  return {
    segmentColumns,
    cells: sa.map((g) => ({ segment: g.meta.segment, action: g.meta.action, totals: g.totals })),
    segments: seg.map((g) => ({ segment: g.meta, totals: g.totals })),
    actions,
    rows,
    segmentKeyOf,
    total: total(cells),
  };
}

/** q(s, a) for a per-(segment, action) target; undefined where the target does not define segment s. */
export type Probability = (segment: readonly string[], action: string) => number | undefined;

function probabilityOf(target: TargetPolicy, view: CubeView): Probability | null {
  switch (target.kind) {
    case 'uniform': {
      const set = new Set(view.actions);
      const q = set.size > 0 ? 1 / set.size : 0;
      return (_s, a) => (set.has(a) ? q : 0);
    }
    case 'always':
      return (_s, a) => (a === target.action ? 1 : 0);
    case 'table': {
      const idx = target.keyColumns.map((c) => view.segmentColumns.indexOf(c));
      // a segment's row of the table, looked up once per segment array (the checks ask for every cell × action, often)
      const rows = new WeakMap<readonly string[], ReadonlyMap<string, number> | null>();
      return (s, a) => {
        let m = rows.get(s);
        if (m === undefined) rows.set(s, (m = target.probabilities.get(idx.map((i) => s[i] as string).join(SEP)) ?? null));
        return m ? m.get(a) ?? 0 : undefined;
      };
    }
    case 'column':
      return null;
  }
}

/** Actions a target may choose in a segment (for support and doubly robust), including unlogged ones. */
function targetActions(target: TargetPolicy, view: CubeView): string[] {
  switch (target.kind) {
    case 'uniform':
      return [...view.actions];
    case 'always':
      return view.actions.includes(target.action) ? [...view.actions] : [...view.actions, target.action];
    case 'table':
      return [...new Set([...view.actions, ...target.actions])];
    case 'column':
      return [...view.actions];
  }
}

export interface UnsupportedCell {
  readonly segment: readonly string[];
  readonly action: string;
  /** target mass on this cell as a share of all rows: (n_s / n) · q(s, a) */
  readonly mass: number;
}

export interface TargetAnalysis {
  readonly target: TargetPolicy;
  readonly q: Probability | null;
  readonly actions: readonly string[];
  /** over valid-propensity rows */
  readonly n: number;
  readonly sumW: number;
  readonly sumW2: number;
  readonly maxWeight: number;
  readonly bySegment: readonly { readonly segment: readonly string[]; readonly n: number; readonly sumW: number; readonly sumW2: number; readonly mass: number }[];
  /** share of the target's mass on (segment, action) cells with no valid-propensity row */
  readonly supportDeficit: number;
  readonly unsupported: readonly UnsupportedCell[];
  /** share of rows in segments the target (a table) does not define */
  readonly undefinedShare: number;
  readonly undefinedSegments: readonly (readonly string[])[];
  /** estimator inputs over rewarded rows; column targets carry q = 1 and weight sums instead */
  readonly estimatorCells: readonly EstimatorCell[];
  readonly rewardedRows: number;
  /** segments where the target puts positive mass */
  readonly serves: (segment: readonly string[]) => boolean;
}

export function analyseTarget(target: TargetPolicy, view: CubeView): TargetAnalysis {
  const q = probabilityOf(target, view);
  const actions = targetActions(target, view);
  // the cube's one reward shift: Σr − Σd = n·shift over the rewarded rows (exact up to one rounding)
  const shift = view.total.nRw > 0 ? (view.total.sumR - view.total.sumD) / view.total.nRw : 0;
  const rows = Math.max(1, view.rows);
  const cellByKey = new Map(view.cells.map((c) => [`${segmentKey(c.segment)}${SEP}${SEP}${c.action}`, c]));
  let n = 0, sumW = 0, sumW2 = 0, maxWeight = 0, deficit = 0, undefinedRows = 0, rewardedRows = 0;
  const unsupported: UnsupportedCell[] = [];
  const undefinedSegments: (readonly string[])[] = [];
  const bySegment: { segment: readonly string[]; n: number; sumW: number; sumW2: number; mass: number }[] = [];
  const estimatorCells: EstimatorCell[] = [];
  const servedKeys = new Set<string>();
  for (const seg of view.segments) {
    const key = segmentKey(seg.segment);
    let sw = 0, sw2 = 0;
    const probe = q ? q(seg.segment, actions[0] ?? '') : 0;
    if (q && probe === undefined) {
      undefinedRows += seg.totals.n;
      undefinedSegments.push(seg.segment);
      deficit += seg.totals.n / rows;
      bySegment.push({ segment: seg.segment, n: seg.totals.nP, sumW: 0, sumW2: 0, mass: 0 });
      n += seg.totals.nP;
      continue;
    }
    let mass = 0;
    for (const a of actions) {
      const cell = cellByKey.get(`${key}${SEP}${SEP}${a}`);
      const t = cell?.totals;
      if (q) {
        const qa = q(seg.segment, a) ?? 0;
        mass += qa;
        if (qa > 0 && (!t || t.nP === 0)) {
          const m = (seg.totals.n / rows) * qa;
          deficit += m;
          unsupported.push({ segment: seg.segment, action: a, mass: m });
        }
        if (!t) continue;
        sw += qa * t.sumInvP;
        sw2 += qa * qa * t.sumInvP2;
        if (qa > 0 && t.minP !== null) maxWeight = Math.max(maxWeight, qa / t.minP);
        if (t.nRw > 0) {
          estimatorCells.push({ segmentKey: key, action: a, q: qa, n: t.nRw, sumInvP: t.sumInvPRw, sumInvP2: t.sumInvP2Rw, sumR: t.sumR, sumR2: t.sumR2, sumRInvP: t.sumRInvP, sumRInvP2: t.sumRInvP2, sumR2InvP2: t.sumR2InvP2, centred: { shift, sumD: t.sumD, sumD2: t.sumD2, sumDInvP: t.sumDInvP, sumDInvP2: t.sumDInvP2, sumD2InvP: t.sumD2InvP, sumD2InvP2: t.sumD2InvP2 } });
        }
      } else if (t?.target) {
        sw += t.target.sumW;
        sw2 += t.target.sumW2;
        mass = 1;
        if (t.nRw > 0) {
          estimatorCells.push({ preweighted: true, segmentKey: key, action: a, q: 1, n: t.nRw, sumInvP: t.target.sumWRw, sumInvP2: t.target.sumW2Rw, sumR: t.sumR, sumR2: t.sumR2, sumRInvP: t.target.sumWR, sumRInvP2: t.target.sumW2R, sumR2InvP2: t.target.sumW2R2 });
        }
      }
      if (t) rewardedRows += t.nRw;
    }
    if (mass > 0) servedKeys.add(key);
    n += seg.totals.nP;
    sumW += sw;
    sumW2 += sw2;
    bySegment.push({ segment: seg.segment, n: seg.totals.nP, sumW: sw, sumW2: sw2, mass });
  }
  return {
    target,
    q,
    actions,
    n,
    sumW,
    sumW2,
    maxWeight,
    bySegment,
    supportDeficit: Math.min(1, deficit),
    unsupported: unsupported.sort((a, b) => b.mass - a.mass),
    undefinedShare: undefinedRows / rows,
    undefinedSegments,
    estimatorCells,
    rewardedRows,
    serves: (s) => servedKeys.has(segmentKey(s)),
  };
}
