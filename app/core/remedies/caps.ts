/**
 * Cap the weights (README.md, "Remedies"): clipped IPS for a grid of caps and for the cap that minimises the
 * stated bound on mean squared error, bias bound² + variance. Every total is the cube's exact sum less a
 * correction over the rows above the cap, listed by the clip query (app/core/scan/rows.ts, clipRowsSql) in a
 * fixed order, so the result does not depend on how the engine read the log.
 */
import { clippedIps, type ClipSums, type ClippedEstimate } from '../stats/clipped-ips.ts';
import type { TargetAnalysis } from '../targets/analysis.ts';

export interface ClipRow {
  readonly w: number;
  readonly r: number | null;
}

export interface CapsInput {
  /** rewarded rows of the log (the IPS n) */
  readonly rewardedRows: number;
  /** every valid row with weight above `exactAbove`, in any order */
  readonly rows: readonly ClipRow[];
  /** caps at or above this are exact: the rows list holds every row with a larger weight */
  readonly exactAbove: number;
  readonly maxWeight: number;
  readonly rewardMin: number;
  readonly rewardMax: number;
  /** caps in the grid (the optimum is added to it) */
  readonly grid?: number;
}

export interface CapsResult {
  readonly caps: readonly ClippedEstimate[];
  /** the cap minimising bias bound² + se² over the grid and every listed weight */
  readonly best: ClippedEstimate | null;
  readonly lowestCap: number;
}

/** The rows in one order (weight descending, then reward, no reward last), so every sum over them is reproducible. */
export function canonicalRows(rows: readonly ClipRow[]): ClipRow[] {
  return [...rows].sort((a, b) => b.w - a.w || (a.r === null ? (b.r === null ? 0 : 1) : b.r === null ? -1 : a.r - b.r));
}

/** Σwr, Σw²r² (rewarded rows) and Σw, Σw² (valid rows) of a target, from the cube. */
export function fullSums(t: TargetAnalysis): { sumWR: number; sumW2R2: number; sumW: number; sumW2: number } {
  let sumWR = 0, sumW2R2 = 0;
  for (const c of t.estimatorCells) {
    sumWR += c.q * c.sumRInvP;
    sumW2R2 += c.q * c.q * c.sumR2InvP2;
  }
  return { sumWR, sumW2R2, sumW: t.sumW, sumW2: t.sumW2 };
}

/** Three significant digits, rounded up (so a cap never falls below the exact range it was chosen in). */
function roundUp(x: number): number {
  if (!(x > 0)) return x;
  const e = Math.floor(Math.log10(x)) - 2;
  const f = 10 ** e;
  return Number((Math.ceil(x / f - 1e-9) * f).toPrecision(3));
}

/**
 * The grid: `count` caps log-spaced from max(exactAbove, 1) up to the largest weight (whose cap clips nothing),
 * rounded up to three significant digits. A cap below 1 would clip rows the target already underweights.
 */
export function capGrid(exactAbove: number, maxWeight: number, count: number): number[] {
  const lo = Math.max(exactAbove, 1);
  if (!(maxWeight > lo)) return maxWeight > 0 ? [roundUp(maxWeight)] : [];
  const out = new Set<number>();
  for (let k = 0; k < count; k++) out.add(roundUp(lo * (maxWeight / lo) ** (k / Math.max(1, count - 1))));
  return [...out].filter((m) => m >= lo).sort((a, b) => a - b);
}

export function capsFor(t: TargetAnalysis, input: CapsInput): CapsResult {
  const rows = canonicalRows(input.rows.filter((r) => r.w > input.exactAbove));
  const sums: ClipSums = { n: input.rewardedRows, ...fullSums(t), above: rows, rewardMin: input.rewardMin, rewardMax: input.rewardMax };
  const grid = capGrid(input.exactAbove, input.maxWeight, input.grid ?? 8);
  const lowestCap = Math.max(input.exactAbove, 1);
  if (grid.length === 0 || input.rewardedRows < 2) return { caps: [], best: null, lowestCap };
  const caps = grid.map((m) => clippedIps(sums, m));
  // the optimum over the grid and every listed weight, found on prefix sums, then evaluated directly
  const candidates = [...new Set(rows.map((r) => r.w).filter((w) => w >= lowestCap))];
  const n = input.rewardedRows;
  const bound = Math.max(Math.abs(input.rewardMin), Math.abs(input.rewardMax));
  let k = 0, rewardedAbove = 0, swr = 0, sr = 0, sw2r2 = 0, sr2 = 0, sw = 0;
  let candidate: number | null = null;
  let candidateMse = Infinity;
  for (const m of [...candidates].sort((a, b) => b - a)) {
    while (k < rows.length && (rows[k] as ClipRow).w > m) {
      const row = rows[k] as ClipRow;
      if (row.r !== null) {
        swr += row.w * row.r;
        sr += row.r;
        sw2r2 += row.w * row.w * row.r * row.r;
        sr2 += row.r * row.r;
        sw += row.w;
        rewardedAbove++;
      }
      k++;
    }
    const s1 = sums.sumWR - (swr - m * sr);
    const s2 = sums.sumW2R2 - (sw2r2 - m * m * sr2);
    const se2 = Math.max(0, (s2 - (s1 * s1) / n) / (n - 1)) / n;
    const bias = (bound * (sw - m * rewardedAbove)) / n;
    if (bias * bias + se2 < candidateMse) {
      candidateMse = bias * bias + se2;
      candidate = m;
    }
  }
  const onGrid = caps.reduce((a, b) => (b.mseBound < a.mseBound ? b : a));
  const direct = candidate === null ? null : clippedIps(sums, candidate);
  const best = direct && direct.mseBound < onGrid.mseBound ? direct : onGrid;
  return { caps, best, lowestCap };
}
