/** The checks in report order (README.md, "What the audit checks"); each is one function from the audit context to a result. */
import type { Check } from './context.ts';
import { checkBalance } from './balance-weights.ts';
import { checkPolicyDrift } from './drift-policy.ts';
import { checkRewardDrift } from './drift-reward.ts';
import { checkEstimates } from './estimate-preview.ts';
import { checkDuplicates } from './identity-duplicates.ts';
import { checkExploration } from './propensity-exploration.ts';
import { checkPropensityRange } from './propensity-range.ts';
import { checkRewardValidity } from './reward-validity.ts';
import { checkSchemaRoles } from './schema-roles.ts';
import { checkSupportFloor } from './support-floor.ts';
import { checkSupportTarget } from './support-target.ts';
import { checkTimeCoverage } from './time-coverage.ts';
import { checkEss } from './weights-ess.ts';
import { checkTail } from './weights-tail.ts';

export const CHECKS: readonly Check[] = [
  checkSchemaRoles,
  checkDuplicates,
  checkTimeCoverage,
  checkPropensityRange,
  checkExploration,
  checkSupportFloor,
  checkSupportTarget,
  checkBalance,
  checkEss,
  checkTail,
  checkRewardValidity,
  checkRewardDrift,
  checkPolicyDrift,
  checkEstimates,
];
