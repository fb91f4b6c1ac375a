import { defineCheck, type CheckDefinition } from './define.ts';
import type { Series } from '../model/report.ts';
import { segmentKey } from '../cube/rollup.ts';
import { cellHeatmap, describeSegment, pct, result, segmentRecord, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { coverByPatterns } from './locate.ts';
import { segmentPredicate } from './predicates.ts';
import { countText as n_, counted } from '../count-words.ts';

export interface SegmentExploration {
  readonly segment: readonly string[];
  readonly rows: number;
  readonly topAction: string;
  readonly topShare: number;
  readonly allPOne: boolean;
  readonly explored: boolean;
}

/** Per full segment: does the logging policy explore there? */
export function explorationBySegment(ctx: AuditContext): SegmentExploration[] {
  const topShareAt = ctx.settings['propensity.exploration.top_action_share'];
  const bySeg = new Map<string, { segment: readonly string[]; rows: number; nP: number; nPOne: number; actions: Map<string, number> }>();
  for (const c of ctx.view.cells) {
    const k = segmentKey(c.segment);
    const g = bySeg.get(k) ?? { segment: c.segment, rows: 0, nP: 0, nPOne: 0, actions: new Map<string, number>() };
    g.rows += c.totals.n;
    g.nP += c.totals.nP;
    g.nPOne += c.totals.nPOne;
    g.actions.set(c.action, (g.actions.get(c.action) ?? 0) + c.totals.n);
    bySeg.set(k, g);
  }
  return [...bySeg.values()].map((g) => {
    let topAction = '';
    let top = -1;
    for (const [a, n] of [...g.actions.entries()].sort()) if (n > top) [topAction, top] = [a, n];
    const topShare = top / Math.max(1, g.rows);
    const allPOne = g.nP > 0 && g.nPOne === g.nP;
    return { segment: g.segment, rows: g.rows, topAction, topShare, allPOne, explored: !(allPOne || topShare >= topShareAt) };
  });
}

/** propensity.exploration: segments where the logging policy did not explore. */
function checkExploration(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('propensity.exploration', 'the propensity, action or reward role is missing');
  const segs = explorationBySegment(ctx);
  const rows = Math.max(1, ctx.view.rows);
  const minShare = ctx.settings['propensity.exploration.min_segment_share'];
  const patterns = coverByPatterns(segs.map((s) => ({ values: s.segment, flagged: !s.explored, payload: s })));
  const findings: DraftFinding[] = [];
  let failing = false;
  let unexploredRows = 0;
  for (const p of patterns) {
    const segment = segmentRecord(ctx.segmentColumns, p.values);
    const n = p.items.reduce((s, x) => s + x.rows, 0);
    unexploredRows += n;
    const share = n / rows;
    const served = p.items.some((x) => ctx.primaryTargets.some((t) => t.serves(x.segment)));
    const status = share >= minShare && served ? 'fail' : 'warn';
    failing ||= status === 'fail';
    const top = p.items.map((x) => x.topAction);
    const sameTop = top.every((a) => a === top[0]);
    const allOne = p.items.every((x) => x.allPOne);
    const minTop = Math.min(...p.items.map((x) => x.topShare));
    findings.push({
      segment,
      ...(sameTop ? { action: top[0] as string } : {}),
      status,
      metrics: { rows: n, share, sub_segments: p.items.length, top_action_share_min: minTop, all_propensities_one: allOne, served_by_target: served },
      message: `no exploration in ${describeSegment(segment)} (${counted(n, 'row')}, ${pct(share)} of the log): ${allOne ? 'every propensity is 1' : `one action holds at least ${pct(minTop)} of rows`}${sameTop ? `, always ${top[0]}` : ''}${served ? '' : '; no target given serves it'}`,
      ...(() => {
        const w = segmentPredicate(ctx.rows!, ctx.segmentColumns, segment);
        return w ? { where: w } : {};
      })(),
    });
  }
  const status = failing ? 'fail' : findings.length ? 'warn' : 'pass';
  const summary = findings.length
    ? `No exploration in ${counted(findings.length, 'place')} holding ${pct(unexploredRows / rows)} of rows: ${findings.map((f) => describeSegment(f.segment)).slice(0, 3).join('; ')}${findings.length > 3 ? '; …' : ''}.`
    : `The logging policy explored in all ${n_(segs.length)} segments.`;
  return result(
    'propensity.exploration',
    status,
    summary,
    { segments: segs.length, unexplored_segments: segs.filter((s) => !s.explored).length, unexplored_share: unexploredRows / rows },
    findings,
    ['propensity.exploration.top_action_share', 'propensity.exploration.min_segment_share'],
    [explorationMap(ctx, segs)],
  );
}

/**
 * The segment map's first layer: each action's share of its segment's rows, a never-logged cell null with
 * its reason (drawn hatched), and each row of a segment where the logging policy did not explore noted.
 */
export function explorationMap(ctx: AuditContext, segs: readonly SegmentExploration[]): Series {
  const counts = cellHeatmap(ctx, "share of each segment's rows by action", "share of the segment's rows", (t) => t.n, 0);
  const explored = new Map(segs.map((s) => [segmentKey(s.segment), s.explored]));
  const rowSegments = counts.segment_keys?.segments ?? [];
  return {
    ...counts,
    values: counts.values.map((row) => {
      const n = row.reduce<number>((s, v) => s + (v ?? 0), 0);
      return row.map((v) => (v && n > 0 ? v / n : null));
    }),
    null_reasons: counts.values.map((row) => row.map((v) => (v ? null : 'never logged'))),
    row_notes: (counts.y ?? []).map((_, i) => {
      const parts = rowSegments[i];
      return parts && explored.get(segmentKey(parts.map((p) => p.value))) === false ? 'not explored' : null;
    }),
  };
}

export const propensityExploration: CheckDefinition<'propensity.exploration'> = defineCheck('propensity.exploration', {
  title: 'Exploration by segment', blocking: true, panel: 'data', remedies: ['restricted', 'plan'],
  settings: ['propensity.exploration.top_action_share', 'propensity.exploration.min_segment_share'],
}, checkExploration);
