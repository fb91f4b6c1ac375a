/** The remedy kinds and their titles. Which remedies address a check is declared in its definition (app/core/checks/define.ts). */
/**
 * restricted: evaluate only where the log has support; caps: trade bias for variance by capping the weights;
 * plan: change the logging (exploration, and logging what the policy did) so that the next log can answer.
 */
export const REMEDY_KINDS = ['restricted', 'caps', 'plan'] as const;
export type RemedyKind = (typeof REMEDY_KINDS)[number];

/** What a remedy does about a check, in a few words (for the reason's link). */
export const REMEDY_TITLES: { readonly [K in RemedyKind]: string } = {
  restricted: 'Evaluate where the log supports it',
  caps: 'Cap the weights',
  plan: 'Plan the next log',
};
