import type { ExtremumField, SumField, TargetMeasureField } from './measures.ts';

/**
 * One cell of the sufficient-statistics cube: all rows sharing (segment values, action, policy version,
 * time bucket). Every other field is a count, sum, minimum or maximum declared in measures.ts (which says
 * over which rows each is taken), so cells merge exactly across files and partitions.
 */
export type CubeCell = CellKeys & { readonly [K in SumField]: number } & { readonly [K in ExtremumField]: number | null } & {
  /** Sums for a mapped target_propensity column q (row weight q/p); null when unmapped. */
  readonly target: TargetColumnSums | null;
};

export interface CellKeys {
  /** Segment values in the cube's segment-column order; capped values are "(other)", nulls "(null)". */
  readonly segment: readonly string[];
  readonly action: string;
  /** 0-based time bucket index; 0 for every cell when no time column is mapped, -1 for rows without a time. */
  readonly bucket: number;
  /** Logged policy version, "" when no policy_version column is mapped. */
  readonly version: string;
}

/** The target-column measures of measures.ts (TARGET_MEASURES). */
export type TargetColumnSums = { readonly [K in TargetMeasureField]: number };

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
  /** Σ r²/p when known (the cube has it over d, not r): DR's Σδ²/p is then exact for any reward */
  readonly sumR2InvP?: number;
  /** The same sums over d = r − shift (the cube's centred sums), for standard errors that do not cancel */
  readonly centred?: CentredSums;
  /** The sums already carry a per-row target probability (a target_propensity column): the "InvP"
   * sums are Σq/p, Σq²/p², Σqr/p, Σq²r/p², Σq²r²/p², and q is 1. */
  readonly preweighted?: boolean;
}

/** Sums over d = r − shift of one estimator cell's rows (measures.ts), with the shift they were taken about. */
export interface CentredSums {
  readonly shift: number;
  readonly sumD: number;
  readonly sumD2: number;
  readonly sumDInvP: number;
  readonly sumDInvP2: number;
  readonly sumD2InvP: number;
  readonly sumD2InvP2: number;
}
