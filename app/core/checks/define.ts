/**
 * A check is declared once, with everything about it: its stable id, its title, whether its failure
 * blocks the verdict, the panel that shows it, the settings it reads, and the function that runs it.
 * The id union, the titles, the blocking set, the audit order, the panel lists and (held by a test)
 * the report schema's check-id enum all derive from the list in ./registry.ts.
 *
 * Each definition is declared with its type (`const x: CheckDefinition<'its.id'> = defineCheck({...})`):
 * the report model's types depend on the id union, so the union must not wait on inferring `run`'s type.
 */
import type { CheckResult } from '../model/report.ts';
import type { SettingKey } from '../settings.ts';
import type { AuditContext } from './context.ts';

/** Where a check is shown in the app besides the check list. */
export type CheckPanel = 'data' | 'weights' | 'drift' | 'estimates';

export interface CheckDefinition<Id extends string = string> {
  readonly id: Id;
  readonly title: string;
  /** a fail (or an error) of this check makes the verdict `not-supported` */
  readonly blocking: boolean;
  readonly panel: CheckPanel;
  /** every setting the check may read; each result's settings_used is a subset */
  readonly settings: readonly SettingKey[];
  readonly run: (ctx: AuditContext) => CheckResult;
}

/** The definition, its `run` stamping the result with the definition's id and title. */
export function defineCheck<const Id extends string>(definition: CheckDefinition<Id>): CheckDefinition<Id> {
  const { id, title } = definition;
  const run = (ctx: AuditContext): CheckResult => ({ ...definition.run(ctx), id: id as CheckResult['id'], title });
  return Object.freeze({ ...definition, settings: Object.freeze([...definition.settings]), run });
}
