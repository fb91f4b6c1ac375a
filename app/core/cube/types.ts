/**
 * One cell of the sufficient-statistics cube (DEVELOPERS.md, "The scans of one audit"): all rows sharing (segment values, action,
 * time bucket). Every field is a sum, count, min or max, so cells merge exactly across files/partitions.
 *
 * Row sets (p is the logged propensity, r the reward):
 *   - all rows:          n, nPInvalid (p null/NaN/<=0/>1), nPOne (p == 1), nRNull (r null or non-finite)
 *   - valid-p rows:      nP, sumInvP, sumInvP2, minP, maxP            (0 < p <= 1)
 *   - rewarded rows:     valid p AND finite r:  nRw, sumInvPRw, sumInvP2Rw, sumR, sumR2, sumRInvP, sumRInvP2, sumR2InvP2
 *   - any finite reward: nRAll, sumRAll, sumR2All                     (on-policy value, reward drift)
 */
export interface CubeCell {
  /** Segment values in the cube's segment-column order; capped values are "(other)", nulls "(null)". */
  readonly segment: readonly string[];
  readonly action: string;
  /** 0-based time bucket index; 0 for every cell when no time column is mapped. */
  readonly bucket: number;
  /** Logged policy version, "" when no policy_version column is mapped. */
  readonly version: string;
  readonly n: number;
  /** Invalid propensities by kind: null (or unparseable), NaN, <= 0, > 1. */
  readonly nPNull: number;
  readonly nPNaN: number;
  readonly nPNonPositive: number;
  readonly nPAboveOne: number;
  /** Valid propensities below the support floor ε the cube was built with. */
  readonly nPBelowFloor: number;
  readonly nPInvalid: number;
  readonly nPOne: number;
  readonly nRNull: number;
  readonly nP: number;
  readonly sumInvP: number;
  readonly sumInvP2: number;
  readonly minP: number | null;
  readonly maxP: number | null;
  readonly nRw: number;
  readonly sumInvPRw: number;
  readonly sumInvP2Rw: number;
  readonly sumR: number;
  readonly sumR2: number;
  readonly sumRInvP: number;
  readonly sumRInvP2: number;
  readonly sumR2InvP2: number;
  readonly nRAll: number;
  readonly sumRAll: number;
  readonly sumR2All: number;
  /** Sums for a mapped target_propensity column q (row weight q/p), same row sets; null when unmapped. */
  readonly target: TargetColumnSums | null;
}

export interface TargetColumnSums {
  /** rows whose target probability is null, NaN or outside [0, 1] */
  readonly nInvalid: number;
  readonly sumW: number;
  readonly sumW2: number;
  readonly sumWRw: number;
  readonly sumW2Rw: number;
  readonly sumWR: number;
  readonly sumW2R: number;
  readonly sumW2R2: number;
}

/**
 * What the off-policy estimators need from a group of rows sharing (segment, action) under a target
 * that assigns probability q to that action in that segment. Sums are over rewarded rows
 * (valid propensity and finite reward). Weight of each row: w = q / p.
 */
export interface EstimatorCell {
  /** Segment key (segment values joined), used to group cells of one segment for doubly robust. */
  readonly segmentKey: string;
  readonly action: string;
  /** Target probability of `action` in this segment. */
  readonly q: number;
  readonly n: number;
  readonly sumInvP: number;
  readonly sumInvP2: number;
  readonly sumR: number;
  readonly sumR2: number;
  readonly sumRInvP: number;
  readonly sumRInvP2: number;
  readonly sumR2InvP2: number;
  /** The sums already carry a per-row target probability (a target_propensity column): the "InvP"
   * sums are Σq/p, Σq²/p², Σqr/p, Σq²r/p², Σq²r²/p², and q is 1. */
  readonly preweighted?: boolean;
}
