/** The checks in report order; every list about checks derives from this one (see ./define.ts). */
import { balanceWeights } from './balance-weights.ts';
import type { CheckDefinition, CheckPanel } from './define.ts';
import type { RemedyKind } from '../remedies/links.ts';
import { driftPolicy } from './drift-policy.ts';
import { driftReward } from './drift-reward.ts';
import { estimatePreview } from './estimate-preview.ts';
import { identityDuplicates } from './identity-duplicates.ts';
import { propensityExploration } from './propensity-exploration.ts';
import { propensityRange } from './propensity-range.ts';
import { rewardValidity } from './reward-validity.ts';
import { schemaRoles } from './schema-roles.ts';
import { supportFloor } from './support-floor.ts';
import { supportTarget } from './support-target.ts';
import { timeCoverage } from './time-coverage.ts';
import { weightsEss } from './weights-ess.ts';
import { weightsTail } from './weights-tail.ts';

export const CHECKS = [
  schemaRoles,
  identityDuplicates,
  timeCoverage,
  propensityRange,
  propensityExploration,
  supportFloor,
  supportTarget,
  balanceWeights,
  weightsEss,
  weightsTail,
  rewardValidity,
  driftReward,
  driftPolicy,
  estimatePreview,
] as const;

export type CheckId = (typeof CHECKS)[number]['id'];

export const CHECK_IDS: readonly CheckId[] = CHECKS.map((c) => c.id);

const BY_ID = new Map<string, CheckDefinition<CheckId>>(CHECKS.map((c) => [c.id, c]));

export function checkDefinition(id: CheckId): CheckDefinition<CheckId> {
  return BY_ID.get(id) as CheckDefinition<CheckId>;
}

export function titleOf(id: CheckId): string {
  return BY_ID.get(id)?.title ?? id;
}

/** Checks whose fail or error makes the verdict `not-supported`. */
export const BLOCKING: ReadonlySet<CheckId> = new Set(CHECKS.filter((c) => c.blocking).map((c) => c.id));

export function checksOnPanel(panel: CheckPanel): readonly CheckId[] {
  return CHECKS.filter((c) => c.panel === panel).map((c) => c.id);
}

/** Which remedies address a failing or warning check, from each check's definition. */
export const REMEDIES_FOR = Object.fromEntries(CHECKS.map((c): [string, readonly RemedyKind[]] => [c.id, c.remedies])) as Readonly<Record<CheckId, readonly RemedyKind[]>>;
