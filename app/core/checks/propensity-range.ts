import { defineCheck, type CheckDefinition } from './define.ts';
import { bucketWindow, describeSegment, pct, result, segmentRecord, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { concentrate } from './locate.ts';
import { and, segmentPredicate, validPropensity, windowPredicate } from './predicates.ts';
import { countText as n_, counted } from '../count-words.ts';

/** propensity.range: p null, NaN, <= 0, > 1 — counts, share, where and when. */
function checkPropensityRange(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('propensity.range', 'the propensity, action or reward role is missing');
  const t = ctx.view.total;
  const rows = Math.max(1, t.n);
  const share = t.nPInvalid / rows;
  const failAt = ctx.settings['propensity.range.fail_share'];
  const status: 'pass' | 'warn' | 'fail' = t.nPInvalid === 0 ? 'pass' : share > failAt ? 'fail' : 'warn';
  const findings: DraftFinding[] = [];
  const rowsExpr = ctx.rows;
  for (const g of concentrate(ctx.cells, ctx.segmentColumns.length, (c) => c.nPInvalid)) {
    const segment = g.column < 0 ? {} : segmentRecord([ctx.segmentColumns[g.column] as string], [g.value as string]);
    const windows = ctx.buckets ? g.windows : [];
    const when = windows.map(([a, b]) => bucketWindow(ctx.buckets!, a, b + 1));
    const base = { segment, status, metrics: { invalid_rows: g.bad, rows: g.rows, share_in_group: g.bad / Math.max(1, g.rows), share_of_invalid: g.bad / t.nPInvalid } };
    const where = (w?: [number, number]) => and(rowsExpr.dialect.notTrue(validPropensity(rowsExpr.propensity, rowsExpr.dialect)), segmentPredicate(rowsExpr, ctx.segmentColumns, segment), w ? windowPredicate(rowsExpr, ctx.buckets, w[0], w[1]) : undefined);
    if (when.length === 0) {
      findings.push({ ...base, message: `${n_(g.bad)} invalid propensities in ${describeSegment(segment)} (${pct(g.bad / Math.max(1, g.rows), 2)} of its rows)`, ...opt(where()) });
    } else {
      when.forEach((w, k) => findings.push({ ...base, window: w, message: `${n_(g.bad)} invalid propensities in ${describeSegment(segment)}, concentrated ${w.from} to ${w.to} (${pct(g.bad / t.nPInvalid)} of all invalid rows)`, ...opt(where(windows[k])) }));
    }
  }
  const kinds = `null or unparseable ${n_(t.nPNull)}, NaN ${n_(t.nPNaN)}, <= 0 ${n_(t.nPNonPositive)}, > 1 ${n_(t.nPAboveOne)}`;
  const summary = t.nPInvalid === 0 ? `All ${n_(t.n)} propensities lie in (0, 1].` : `${counted(t.nPInvalid, 'row')} (${pct(share, 2)}) have an invalid propensity (${kinds}); fail above ${pct(failAt)}.`;
  return result('propensity.range', status, summary, { invalid_rows: t.nPInvalid, invalid_share: share, null: t.nPNull, nan: t.nPNaN, non_positive: t.nPNonPositive, above_one: t.nPAboveOne, equal_one: t.nPOne }, findings, ['propensity.range.fail_share']);
}

function opt(where: string | undefined): { where?: string } {
  return where ? { where } : {};
}

export const propensityRange: CheckDefinition<'propensity.range'> = defineCheck('propensity.range', {
  title: 'Propensity values', blocking: true, panel: 'data', remedies: ['restricted', 'plan'],
  settings: ['propensity.range.fail_share'],
}, checkPropensityRange);
