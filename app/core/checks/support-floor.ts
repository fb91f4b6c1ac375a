import { defineCheck, type CheckDefinition } from './define.ts';
import { cellHeatmap, describeSegment, fmt, notListed, pct, result, segmentRecord, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { coverByPatterns } from './locate.ts';
import { and, segmentPredicate, validPropensity } from './predicates.ts';
import { countText as n_, counted } from '../count-words.ts';

const MAX_FINDINGS = 20;

/** support.floor: minimum propensity by segment × action; share of rows under the floor ε. */
function checkSupportFloor(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('support.floor', 'the propensity, action or reward role is missing');
  const eps = ctx.settings['support.floor.epsilon'];
  const maxShare = ctx.settings['support.floor.max_share'];
  const t = ctx.view.total;
  const share = t.nPBelowFloor / Math.max(1, t.nP);
  const items = ctx.view.cells
    .filter((c) => c.totals.nP > 0)
    .map((c) => ({ values: [...c.segment, c.action], flagged: (c.totals.minP ?? 1) < eps, payload: c }));
  const patterns = coverByPatterns(items)
    .map((p) => ({ p, below: p.items.reduce((s, c) => s + c.totals.nPBelowFloor, 0), minP: Math.min(...p.items.map((c) => c.totals.minP ?? 1)) }))
    .sort((a, b) => a.minP - b.minP || b.below - a.below);
  const status = share > maxShare ? 'warn' : 'pass';
  const findings: DraftFinding[] = patterns.slice(0, MAX_FINDINGS).map(({ p, below, minP }) => {
    const action = p.values[p.values.length - 1] as string;
    const segment = segmentRecord(ctx.segmentColumns, p.values.slice(0, -1));
    const rowsIn = p.items.reduce((s, c) => s + c.totals.nP, 0);
    const segPred = segmentPredicate(ctx.rows!, ctx.segmentColumns, segment);
    const d = ctx.rows!.dialect;
    const where = action === '*' ? and(segPred, `${ctx.rows!.propensity} < ${d.double(eps)}`, validPropensity(ctx.rows!.propensity, d)) : and(segPred, `${ctx.rows!.action} = ${d.literal(action)}`, `${ctx.rows!.propensity} < ${d.double(eps)}`, validPropensity(ctx.rows!.propensity, d));
    return {
      segment,
      ...(action !== '*' ? { action } : {}),
      status: 'warn' as const,
      metrics: { min_propensity: minP, rows_below_floor: below, rows: rowsIn, cells: p.items.length },
      message: `${action !== '*' ? action : 'some actions'} in ${describeSegment(segment)}: minimum propensity ${fmt(minP)} < ε = ${eps} (${n_(below)} of ${counted(rowsIn, 'row')} below the floor; weights up to ${fmt(1 / minP)})`,
      ...(where ? { where } : {}),
    };
  });
  const lowest = patterns[0];
  const left = notListed(patterns.length - findings.length, MAX_FINDINGS, 'places, lowest propensity first');
  const summary = `${pct(share, 2)} of rows have propensity below ε = ${eps} (warn above ${pct(maxShare)}); ${counted(patterns.length, 'place')} with cells under the floor${lowest ? `, lowest ${fmt(lowest.minP)}` : ''}.${left.note}`;
  return result(
    'support.floor',
    status,
    summary,
    { epsilon: eps, rows_below_floor: t.nPBelowFloor, share_below_floor: share, min_propensity: t.minP, cells_below_floor: items.filter((i) => i.flagged).length, ...left.metrics },
    findings,
    ['support.floor.epsilon', 'support.floor.max_share'],
    [cellHeatmap(ctx, 'minimum propensity by segment and action', 'propensity', (t) => t.minP, null)],
  );
}

export const supportFloor: CheckDefinition<'support.floor'> = defineCheck('support.floor', {
  title: 'Propensity floor', blocking: false, panel: 'weights', remedies: ['restricted', 'caps', 'plan'],
  settings: ['support.floor.epsilon', 'support.floor.max_share'],
}, checkSupportFloor);
