import { defineCheck, type CheckDefinition } from './define.ts';
import { pct, result, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { countText as n_, counted } from '../count-words.ts';

/** identity.duplicates: decision ids are unique (exact counts of duplicated ids and rows). */
function checkDuplicates(ctx: AuditContext): ReturnType<typeof result> {
  const d = ctx.duplicates;
  if (!ctx.roles.decision_id || !d) return skipped('identity.duplicates', 'no decision_id column mapped');
  const rows = Math.max(1, ctx.profile.rows);
  const share = d.extraRows / rows;
  const failAt = ctx.settings['identity.duplicates.fail_share'];
  const status = d.ids === 0 ? 'pass' : share > failAt ? 'fail' : 'warn';
  const findings: DraftFinding[] = [];
  if (d.ids > 0) {
    const id = ctx.rows?.decisionId;
    findings.push({
      segment: {},
      status,
      metrics: { duplicated_ids: d.ids, rows_in_duplicates: d.rowsInDuplicates, extra_rows: d.extraRows, extra_share: share, max_copies: d.maxCopies },
      message: `${counted(d.ids, 'decision id')} ${d.ids === 1 ? 'appears' : 'appear'} more than once (${counted(d.rowsInDuplicates, 'row')}; ${counted(d.extraRows, 'extra row')}, ${pct(share, 2)} of the log; at most ${n_(d.maxCopies)} copies). Examples: ${d.exampleIds.join(', ')}.`,
      ...(id && d.exampleIds.length ? { where: `${id} IN (${d.exampleIds.map((x) => ctx.rows!.dialect.literal(x)).join(', ')})` } : {}),
    });
  }
  const summary = d.ids === 0 ? `All ${n_(ctx.profile.rows)} decision ids are unique.` : `${counted(d.ids, 'duplicated decision id')}: ${counted(d.extraRows, 'extra row')} (${pct(share, 2)} of rows; fail above ${pct(failAt)}).`;
  return result('identity.duplicates', status, summary, { duplicated_ids: d.ids, rows_in_duplicates: d.rowsInDuplicates, extra_rows: d.extraRows, extra_share: share }, findings, ['identity.duplicates.fail_share']);
}

export const identityDuplicates: CheckDefinition<'identity.duplicates'> = defineCheck('identity.duplicates', {
  title: 'Duplicate decision ids', blocking: true, panel: 'data', remedies: ['plan'],
  settings: ['identity.duplicates.fail_share'],
}, checkDuplicates);
