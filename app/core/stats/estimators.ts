import normalQuantile from '@stdlib/stats-base-dists-normal-quantile';
import type { CentredSums, EstimatorCell } from '../cube/types.ts';

/**
 * Off-policy value estimates computed from cube sums alone (README.md, "What the audit checks": `estimate.preview`).
 * A row in cell (s, a) with logged propensity p has weight w = q/p, so within a cell
 *   Σw = q·ΣinvP, Σw² = q²·ΣinvP², Σwr = q·ΣrInvP, Σw²r = q²·ΣrInvP², Σ(wr)² = q²·Σr²InvP².
 */
export interface Estimate {
  readonly value: number;
  readonly se: number;
  /** Bounds of the two-sided 95% normal interval value ± z₀.₉₇₅·se. */
  readonly ciLow: number;
  readonly ciHigh: number;
}

/** Target probability of `action` in the segment `segmentKey` (the same key the cells carry). */
export type TargetProbability = (segmentKey: string, action: string) => number;

const Z_975 = normalQuantile(0.975, 0, 1);

/** 80% power at two-sided α = 0.05: z₀.₉₇₅ + z₀.₈ ≈ 1.96 + 0.84 (common practice). */
const MDD_MULTIPLIER = 2.8;

/** Tolerance for a target's probabilities in one segment summing to 1 (float noise of user tables). */
const SUM_TO_ONE_TOLERANCE = 1e-6;

function withInterval(value: number, se: number): Estimate {
  return { value, se, ciLow: value - Z_975 * se, ciHigh: value + Z_975 * se };
}

/** SE of the mean of n values from Σx and Σx² (sample sd with n − 1, over √n); round-off below 0 is clamped. */
function seOfMean(n: number, sum: number, sumSq: number): number {
  const variance = Math.max(0, (sumSq - (sum * sum) / n) / (n - 1));
  return Math.sqrt(variance / n);
}

function describe(cell: EstimatorCell, index: number): string {
  return `cell ${index} (segment ${JSON.stringify(cell.segmentKey)}, action ${JSON.stringify(cell.action)})`;
}

function checkCells(fn: string, cells: readonly EstimatorCell[]): number {
  let rows = 0;
  cells.forEach((cell, index) => {
    if (!(cell.q >= 0 && cell.q <= 1)) {
      throw new RangeError(`${fn}: ${describe(cell, index)}: q must be a probability in [0, 1], got ${cell.q}`);
    }
    if (!Number.isInteger(cell.n) || cell.n < 0) {
      throw new RangeError(`${fn}: ${describe(cell, index)}: n must be a non-negative integer, got ${cell.n}`);
    }
    const sums = [cell.sumInvP, cell.sumInvP2, cell.sumR, cell.sumR2, cell.sumRInvP, cell.sumRInvP2, cell.sumR2InvP2];
    if (!sums.every(Number.isFinite)) {
      throw new RangeError(`${fn}: ${describe(cell, index)}: every sum must be a finite number`);
    }
    // Each row has 1/p ≥ 1, so ΣinvP ≥ n; a smaller sum means the cell was not built from valid propensities.
    if ((!cell.preweighted && cell.sumInvP < cell.n * (1 - 1e-12)) || cell.sumInvP2 < 0 || cell.sumR2 < 0 || cell.sumR2InvP2 < 0) {
      throw new RangeError(`${fn}: ${describe(cell, index)}: sums are inconsistent with propensities in (0, 1]`);
    }
    rows += cell.n;
  });
  return rows;
}

/** Every cell's centred sums, when all cells carry them about one shift; otherwise null (the plain sums are used). */
function centredOf(cells: readonly EstimatorCell[]): { shift: number; sums: readonly CentredSums[] } | null {
  const sums: CentredSums[] = [];
  for (const c of cells) {
    if (!c.centred || c.preweighted) return null;
    sums.push(c.centred);
  }
  const shift = sums[0]?.shift ?? 0;
  if (!sums.every((x) => x.shift === shift) || !sums.every((x) => [x.sumD, x.sumD2, x.sumDInvP, x.sumDInvP2, x.sumD2InvP, x.sumD2InvP2].every(Number.isFinite))) return null;
  return { shift, sums };
}

/** The cells with their reward sums replaced by the centred ones (d = r − shift), Σd²/p included. */
function inCentredUnits(cells: readonly EstimatorCell[], sums: readonly CentredSums[]): EstimatorCell[] {
  return cells.map((c, i) => {
    const d = sums[i] as CentredSums;
    return { segmentKey: c.segmentKey, action: c.action, q: c.q, n: c.n, sumInvP: c.sumInvP, sumInvP2: c.sumInvP2, sumR: d.sumD, sumR2: d.sumD2, sumRInvP: d.sumDInvP, sumRInvP2: d.sumDInvP2, sumR2InvP2: d.sumD2InvP2, sumR2InvP: d.sumD2InvP };
  });
}

function checkRowCount(fn: string, n: number): void {
  if (!(n >= 2)) throw new RangeError(`${fn}: needs at least 2 rewarded rows to estimate a standard error, got ${n}`);
}

/**
 * Inverse propensity scoring: V̂ = (1/n)·Σ wᵢrᵢ over the n rewarded rows, SE = sample sd of wᵢrᵢ / √n.
 * `nTotal` counts every rewarded row of the log, so cells the target gives q = 0 may be left out.
 * With centred sums (d = r − c), wr = u + c·v with u = wd, v = w, and Σ(wr − V̂)² = S_uu + 2c·S_uv + c²·S_vv
 * (S the centred sums of squares and products), which does not cancel where w is constant and the reward's
 * mean is large against its spread (Chan, Golub & LeVeque 1983); IPS is not shift-invariant, so the c terms stay.
 * Source: Horvitz & Thompson (1952), JASA 47(260), estimator of a population total.
 */
export function ips(cells: readonly EstimatorCell[], nTotal: number): Estimate {
  const rows = checkCells('ips', cells);
  if (!Number.isInteger(nTotal)) throw new RangeError(`ips: nTotal must be an integer, got ${nTotal}`);
  checkRowCount('ips', nTotal);
  if (nTotal < rows) throw new RangeError(`ips: nTotal (${nTotal}) is smaller than the cells' row count (${rows})`);
  let sumWR = 0;
  let sumWR2 = 0;
  for (const c of cells) {
    sumWR += c.q * c.sumRInvP;
    sumWR2 += c.q * c.q * c.sumR2InvP2;
  }
  const centred = centredOf(cells);
  if (!centred) return withInterval(sumWR / nTotal, seOfMean(nTotal, sumWR, sumWR2));
  let su = 0, suu = 0, sv = 0, svv = 0, suv = 0;
  cells.forEach((c, i) => {
    const d = centred.sums[i] as CentredSums;
    su += c.q * d.sumDInvP;
    suu += c.q * c.q * d.sumD2InvP2;
    sv += c.q * c.sumInvP;
    svv += c.q * c.q * c.sumInvP2;
    suv += c.q * c.q * d.sumDInvP2;
  });
  const n = nTotal;
  const k = centred.shift;
  const ss = suu - (su * su) / n + 2 * k * (suv - (su * sv) / n) + k * k * (svv - (sv * sv) / n);
  return withInterval(sumWR / nTotal, Math.sqrt(Math.max(0, ss) / (n - 1) / n));
}

/**
 * Self-normalized IPS: V̂ = Σwr / Σw (with centred sums the residuals are formed over d = r − c). Delta-method variance of the ratio,
 * (1/n)·mean(w²(r − V̂)²)/mean(w)² = Σw²(r − V̂)² / (Σw)², where
 * Σw²(r − V̂)² = Σw²r² − 2V̂·Σw²r + V̂²·Σw² (so n cancels and q = 0 cells may be left out).
 * Source: Swaminathan & Joachims (2015), NeurIPS, "The self-normalized estimator for counterfactual
 * learning"; ratio-estimator variance as in Hesterberg (1995), Technometrics 37(2).
 */
export function snips(cells: readonly EstimatorCell[]): Estimate {
  const rows = checkCells('snips', cells);
  checkRowCount('snips', rows);
  let sumW = 0;
  let sumWR = 0;
  for (const c of cells) {
    sumW += c.q * c.sumInvP;
    sumWR += c.q * c.sumRInvP;
  }
  if (!(sumW > 0)) {
    throw new RangeError('snips: the target puts no probability on any logged (segment, action), so Σw = 0');
  }
  const value = sumWR / sumW;
  // the residuals r − V̂ = d − V̂_d are shift-invariant: formed from the centred sums where the cells have them
  const centred = centredOf(cells);
  const units = centred ? inCentredUnits(cells, centred.sums) : cells;
  let level = value;
  if (centred) {
    let sumWD = 0;
    for (const c of units) sumWD += c.q * c.sumRInvP;
    level = sumWD / sumW;
  }
  let sumSquaredResidual = 0;
  for (const c of units) {
    sumSquaredResidual += c.q * c.q * (c.sumR2InvP2 - 2 * level * c.sumRInvP2 + level * level * c.sumInvP2);
  }
  return withInterval(value, Math.sqrt(Math.max(0, sumSquaredResidual) / (sumW * sumW)));
}

/** How doublyRobust fits its reward model, stated in the report beside the estimate. */
export const DR_MODEL = 'leave-one-out segment × action mean rewards; cells with fewer than 2 rows use the action\'s mean over other segments';

/**
 * Doubly robust estimate with a leave-one-out segment × action mean-reward model:
 *   DRᵢ = D₋ᵢ(sᵢ) + wᵢ(rᵢ − r̂₋ᵢ(sᵢ, aᵢ)),  D₋ᵢ(s) = Σₐ π(a|s)·r̂₋ᵢ(s, a),
 * where r̂₋ᵢ(s, a) is the mean reward of the other logged rows of (s, a), so no row's correction uses a
 * model fitted on itself (cross-fitting in its leave-one-out form; Chernozhukov et al. 2018, Econometrics
 * Journal 21(1), C1–C68). A cell with fewer than 2 rows uses the action's mean over the other segments
 * (else the mean of every other row), fixed; an unlogged pair the action's mean, an unlogged action the log's.
 *
 * With δᵢ = rᵢ − r̂ (r̂ the full cell mean, n the cell's rows, q = π(a|s)): r̂₋ᵢ = r̂ − δᵢ/(n − 1), so
 *   DRᵢ = D(s) + (q/(n − 1))·δᵢ·(n/pᵢ − 1),
 * and the row sums follow from the cube's sums: Σδ/p = ΣrInvP − r̂ΣinvP, Σδ²/p² = Σr²InvP² − 2r̂ΣrInvP² + r̂²ΣinvP²,
 * Σδ² = Σr² − n r̂², and Σδ²/p = Σr²/p − 2r̂ΣrInvP + r̂²ΣinvP, with Σr²/p from the cube's centred Σd²/p (the SE is
 * formed over d = r − c, as DR is shift-equivariant), else ΣrInvP for a 0/1 reward (Σr² = Σr), else the bound
 * Σδ²/p ≥ Σδ² (p ≤ 1), which can only widen the interval.
 * V̂ = mean of DRᵢ; SE = sample sd of DRᵢ / √n. Every rewarded row contributes D(sᵢ), so the cells must
 * cover the whole log, q = 0 cells included, and `target` must give probabilities over all `actions`
 * that sum to 1 in every segment. With `partial`, they may sum to less (a policy restricted to some cells): the
 * estimate is then of E_π[r·1{(s, a) in those cells}], the same formula with the missing mass earning nothing.
 * Source: Dudík, Langford & Li (2011), ICML, "Doubly robust policy evaluation and learning", eq. (2).
 */
export function doublyRobust(
  cells: readonly EstimatorCell[],
  target: TargetProbability,
  actions: readonly string[],
  options: { readonly partial?: boolean } = {},
): Estimate {
  const partial = options.partial === true;
  // DR is shift-equivariant when Σ_a π(a|s) = 1, so its SE is then formed in centred units where the cells have
  // them; a partial policy's missing mass breaks the equivariance, so its SE stays on the plain sums
  const centred = partial ? null : centredOf(cells);
  const sums = drSums(cells, target, actions, partial, centred ? [inCentredUnits(cells, centred.sums)] : []);
  const plain = sums[0] as { value: number; se: number };
  return withInterval(plain.value, (sums[1] ?? plain).se);
}

interface DrCell {
  /** index of the cell's (segment, action) pair */
  readonly pair: number;
  /** index of the cell's segment in the direct-method values */
  readonly segment: number;
  /** index of the cell's action */
  readonly action: number;
}

/**
 * DR's value and SE over `cells`, then over each of `alsoIn` (the same cells in other reward units: same keys,
 * q, n and propensity sums). The target is read and checked once, and the pairs indexed once, for all of them.
 */
function drSums(cells: readonly EstimatorCell[], target: TargetProbability, actions: readonly string[], partial: boolean, alsoIn: readonly (readonly EstimatorCell[])[]): { value: number; se: number }[] {
  const rows = checkCells('doublyRobust', cells);
  checkRowCount('doublyRobust', rows);
  if (actions.length === 0) throw new RangeError('doublyRobust: the action set is empty');
  const actionIndex = new Map(actions.map((a, i) => [a, i]));
  if (actionIndex.size !== actions.length) throw new RangeError('doublyRobust: the action set has duplicates');

  const segmentIndex = new Map<string, number>();
  const segments: string[] = [];
  const pairIndex = new Map<string, number>();
  const pairN: number[] = [];
  const index: DrCell[] = cells.map((c, i) => {
    const action = actionIndex.get(c.action);
    if (action === undefined) throw new RangeError(`doublyRobust: ${describe(c, i)}: action is not in the action set`);
    const q = target(c.segmentKey, c.action);
    if (!(Math.abs(q - c.q) <= 1e-9)) {
      throw new RangeError(`doublyRobust: ${describe(c, i)}: cell q = ${c.q} but the target gives ${q}`);
    }
    let segment = segmentIndex.get(c.segmentKey);
    if (segment === undefined) {
      segmentIndex.set(c.segmentKey, (segment = segments.length));
      segments.push(c.segmentKey);
    }
    const key = `${segment}\u0000${action}`;
    let pair = pairIndex.get(key);
    if (pair === undefined) {
      pairIndex.set(key, (pair = pairN.length));
      pairN.push(0);
    }
    pairN[pair] = (pairN[pair] as number) + c.n;
    return { pair, segment, action };
  });
  const actionN = new Float64Array(actions.length);
  cells.forEach((c, i) => { const a = (index[i] as DrCell).action; actionN[a] = (actionN[a] as number) + c.n; });

  // the target over every segment × action, checked once: [action, π, pair index or −1] where π > 0
  const direct: { readonly action: number; readonly pi: number; readonly pair: number }[][] = segments.map((segmentKey, segment) => {
    let mass = 0;
    const terms: { action: number; pi: number; pair: number }[] = [];
    actions.forEach((action, a) => {
      const pi = target(segmentKey, action);
      if (!(pi >= 0 && pi <= 1)) {
        throw new RangeError(
          `doublyRobust: target gives ${pi} for segment ${JSON.stringify(segmentKey)}, action ${JSON.stringify(action)}`,
        );
      }
      mass += pi;
      if (pi > 0) terms.push({ action: a, pi, pair: pairIndex.get(`${segment}\u0000${a}`) ?? -1 });
    });
    if (partial ? !(mass <= 1 + SUM_TO_ONE_TOLERANCE) : !(Math.abs(mass - 1) <= SUM_TO_ONE_TOLERANCE)) {
      throw new RangeError(`doublyRobust: target probabilities sum to ${mass} in segment ${JSON.stringify(segmentKey)}`);
    }
    return terms;
  });

  return [cells, ...alsoIn].map((units) => {
    const pairR = new Float64Array(pairN.length);
    const actionR = new Float64Array(actions.length);
    let sumRAll = 0;
    units.forEach((c, i) => {
      const x = index[i] as DrCell;
      pairR[x.pair] = (pairR[x.pair] as number) + c.sumR;
      actionR[x.action] = (actionR[x.action] as number) + c.sumR;
      sumRAll += c.sumR;
    });
    const overallMean = sumRAll / rows;
    /** the model of a pair with fewer than 2 rows: the action's mean over the other cells, else every other row's */
    const outOfCell = (pair: number, action: number): number => {
      const n = pairN[pair] as number;
      const an = actionN[action] as number;
      if (an > n) return ((actionR[action] as number) - (pairR[pair] as number)) / (an - n);
      return rows > n ? (sumRAll - (pairR[pair] as number)) / (rows - n) : overallMean;
    };
    const model = (pair: number, action: number): number => {
      if (pair >= 0) {
        const n = pairN[pair] as number;
        if (n >= 2) return (pairR[pair] as number) / n;
        if (n > 0) return outOfCell(pair, action);
      }
      const an = actionN[action] as number;
      return an > 0 ? (actionR[action] as number) / an : overallMean;
    };
    const directValue = direct.map((terms) => {
      let d = 0;
      for (const t of terms) d += t.pi * model(t.pair, t.action);
      return d;
    });

    let sumDR = 0;
    let sumDR2 = 0;
    units.forEach((c, i) => {
      if (c.n === 0) return;
      const x = index[i] as DrCell;
      const d = directValue[x.segment] as number;
      const rHat = model(x.pair, x.action);
      const dInvP = c.sumRInvP - rHat * c.sumInvP;
      const d2InvP2 = c.sumR2InvP2 - 2 * rHat * c.sumRInvP2 + rHat * rHat * c.sumInvP2;
      const n = pairN[x.pair] as number;
      if (n < 2) {
        // a fixed out-of-cell model: DRᵢ = D(s) + wᵢ(rᵢ − r̂)
        const correction = c.q * dInvP;
        sumDR += c.n * d + correction;
        sumDR2 += c.n * d * d + 2 * d * correction + c.q * c.q * d2InvP2;
        return;
      }
      // the cell's own rows: n and the δ sums are over the whole (segment, action) pair, which c may be a part of
      const k = c.q / (n - 1);
      const dSum = c.sumR - c.n * rHat;
      const d2 = Math.max(0, c.sumR2 - 2 * rHat * c.sumR + c.n * rHat * rHat);
      const binary = c.sumR2 === c.sumR;
      const d2InvP = c.sumR2InvP !== undefined
        ? c.sumR2InvP - 2 * rHat * c.sumRInvP + rHat * rHat * c.sumInvP
        : binary ? c.sumRInvP - 2 * rHat * c.sumRInvP + rHat * rHat * c.sumInvP : d2;
      const correction = k * (n * dInvP - dSum);
      sumDR += c.n * d + correction;
      sumDR2 += c.n * d * d + 2 * d * correction + k * k * (n * n * d2InvP2 - 2 * n * d2InvP + d2);
    });
    return { value: sumDR / rows, se: seOfMean(rows, sumDR, sumDR2) };
  });
}

/**
 * The logging policy's own value: mean logged reward, SE = sample sd / √n, normal 95% interval.
 * Source: the central limit theorem for a sample mean (common practice).
 */
export function onPolicyValue(n: number, sumR: number, sumR2: number, centred?: { readonly sumD: number; readonly sumD2: number }): Estimate {
  if (!Number.isInteger(n)) throw new RangeError(`onPolicyValue: n must be an integer, got ${n}`);
  checkRowCount('onPolicyValue', n);
  if (!Number.isFinite(sumR) || !Number.isFinite(sumR2) || sumR2 < 0) {
    throw new RangeError('onPolicyValue: Σr and Σr² must be finite, Σr² non-negative');
  }
  // the SE is invariant to a shift of r; sums of d = r − c with c near the mean do not cancel (Chan, Golub & LeVeque 1983)
  return withInterval(sumR / n, centred ? seOfMean(n, centred.sumD, centred.sumD2) : seOfMean(n, sumR, sumR2));
}

/**
 * Smallest true difference from a fixed value that a two-sided 5% test on an estimate with this SE
 * detects with 80% power: (z₀.₉₇₅ + z₀.₈)·SE ≈ 2.8·SE. Source: common practice (normal power formula).
 */
export function minimumDetectableDifference(se: number): number {
  if (!(se >= 0) || !Number.isFinite(se)) throw new RangeError(`minimumDetectableDifference: se must be finite and ≥ 0, got ${se}`);
  return MDD_MULTIPLIER * se;
}
