/**
 * A check is declared once, with everything about it: its stable id, its title, whether its failure
 * blocks the verdict, the panel that shows it, the settings it reads, the remedies that address it, and
 * the function that runs it. The id union, the titles, the blocking set, the audit order, the panel lists,
 * the remedy links and (held by a test) the report schema's check-id enum all derive from the list in
 * ./registry.ts.
 *
 * Each definition is declared with its type (`const x: CheckDefinition<'its.id'> = defineCheck('its.id', {...}, run)`):
 * the report model's types depend on the id union, so the union must not wait on inferring `run`'s type.
 */
import type { CheckResult } from '../model/report.ts';
import type { RemedyKind } from '../remedies/links.ts';
import type { SettingKey } from '../settings.ts';
import type { AuditContext } from './context.ts';

/** Where a check is shown in the app besides the check list. */
export type CheckPanel = 'data' | 'weights' | 'drift' | 'estimates';

/** What a check says about itself besides its id and its run. */
export interface CheckAbout {
  readonly title: string;
  /** a fail (or an error) of this check makes the verdict `not-supported` */
  readonly blocking: boolean;
  readonly panel: CheckPanel;
  /** every setting the check may read; each result's settings_used is a subset */
  readonly settings: readonly SettingKey[];
  /** the remedies a failing or warning result links to (app/core/remedies); at least one */
  readonly remedies: readonly [RemedyKind, ...RemedyKind[]];
}

export interface CheckDefinition<Id extends string = string> extends CheckAbout {
  readonly id: Id;
  readonly run: (ctx: AuditContext) => CheckResult;
}

/** The definition, its `run` stamping the result with the definition's id and title. */
export function defineCheck<const Id extends string>(id: Id, about: CheckAbout, run: (ctx: AuditContext) => CheckResult): CheckDefinition<Id> {
  const stamped = (ctx: AuditContext): CheckResult => ({ ...run(ctx), id: id as CheckResult['id'], title: about.title });
  return Object.freeze({ id, ...about, settings: Object.freeze([...about.settings]), remedies: Object.freeze([...about.remedies]) as CheckAbout['remedies'], run: stamped });
}
