/**
 * Re-evaluating a target from the cube alone, with no scan: support, ESS and estimates for an edited
 * policy table (the interactive path of the desktop and web faces). PSIS k̂ and the top-1% weight share
 * need the rows behind the largest weights, so they are not part of a preview.
 */
import { estimatesFor, type TargetEstimates } from '../checks/estimate-preview.ts';
import { essSummary } from '../checks/weights-ess.ts';
import type { CubeCell } from '../cube/types.ts';
import { analyseTarget, cubeView, type UnsupportedCell } from './analysis.ts';
import type { TargetPolicy } from './targets.ts';

export interface TargetPreview extends TargetEstimates {
  readonly name: string;
  readonly supportDeficit: number;
  readonly unsupported: readonly UnsupportedCell[];
  readonly undefinedShare: number;
  readonly ess: number;
  readonly essFraction: number;
  readonly maxWeight: number;
}

export function previewTarget(cells: readonly CubeCell[], segmentColumns: readonly string[], policy: TargetPolicy): TargetPreview {
  const t = analyseTarget(policy, cubeView(cells, segmentColumns));
  const rewarded = cells.filter((c) => c.action !== '(null)').reduce((s, c) => s + c.nRw, 0);
  const e = essSummary(t, undefined);
  return {
    name: policy.name,
    supportDeficit: t.supportDeficit,
    unsupported: t.unsupported.slice(0, 20),
    undefinedShare: t.undefinedShare,
    ess: e.ess,
    essFraction: e.fraction,
    maxWeight: e.maxWeight,
    ...estimatesFor(t, rewarded),
  };
}
