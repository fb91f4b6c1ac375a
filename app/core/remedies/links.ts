/** Which remedy addresses a failing or warning check: declared once per check id (the type makes it complete). */
import type { CheckId } from '../checks/registry.ts';

export const REMEDY_KINDS = ['restricted', 'caps', 'plan'] as const;
export type RemedyKind = (typeof REMEDY_KINDS)[number];

/**
 * restricted: evaluate only where the log has support; caps: trade bias for variance by capping the weights;
 * plan: change the logging (exploration, and logging what the policy did) so that the next log can answer.
 */
export const REMEDIES_FOR: { readonly [K in CheckId]: readonly RemedyKind[] } = {
  'schema.roles': ['plan'],
  'identity.duplicates': ['plan'],
  'time.coverage': ['plan'],
  'propensity.range': ['restricted', 'plan'],
  'propensity.exploration': ['restricted', 'plan'],
  'support.floor': ['restricted', 'caps', 'plan'],
  'support.target': ['restricted', 'plan'],
  'balance.weights': ['plan'],
  'weights.ess': ['caps', 'plan'],
  'weights.tail': ['caps', 'plan'],
  'reward.validity': ['plan'],
  'drift.reward': ['plan'],
  'drift.policy': ['plan'],
  'estimate.preview': ['caps', 'plan'],
};

/** What a remedy does about a check, in a few words (for the reason's link). */
export const REMEDY_TITLES: { readonly [K in RemedyKind]: string } = {
  restricted: 'Evaluate where the log supports it',
  caps: 'Cap the weights',
  plan: 'Plan the next log',
};
