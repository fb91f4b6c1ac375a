/**
 * The segment × action map regrouped by any subset of the segment columns, from the cube alone (no
 * scan): rows, minimum propensity and the weight-balance z of each (group, action) cell.
 */
import { rollup, SEP } from './cube/rollup.ts';
import type { CubeCell } from './cube/types.ts';
import type { SegmentKeys, SegmentPart, Series } from './model/report.ts';
import { NULL_LABEL } from './scan/expressions.ts';
import { weightBalance } from './stats/balance.ts';

/** The sums of one (group, action) cell of the map: what the three series are drawn from. */
export interface GroupActionTotals {
  /** The group's segment values joined with " · ", or "all rows" when grouped by nothing. */
  readonly group: string;
  /** The group's values, in the order of the columns grouped by. */
  readonly values: readonly string[];
  readonly action: string;
  readonly n: number;
  readonly nP: number;
  readonly sumInvP: number;
  readonly sumInvP2: number;
  readonly minP: number | null;
}

export function groupLabel(values: readonly string[]): string {
  return values.length ? values.join(' · ') : 'all rows';
}

/** A segment as column/value pairs, from its values in the order of `columns`. */
export function segmentParts(columns: readonly string[], values: readonly string[]): SegmentPart[] {
  return columns.map((column, i) => ({ column, value: values[i] as string }));
}

/** How checks label a segment on a chart axis: its values in segment-column order, joined with " · ". */
export function segmentText(segment: readonly SegmentPart[]): string {
  return segment.map((p) => p.value).join(' · ');
}

/**
 * A chart's segment axis: each distinct segment once, in the order of its label, and the key that says
 * which segment each label stands for (the report's `segment_keys`).
 */
export function segmentAxis(axis: SegmentKeys['axis'], segments: readonly (readonly SegmentPart[])[], label: (segment: readonly SegmentPart[]) => string = segmentText): { labels: string[]; keys: SegmentKeys } {
  const byLabel = new Map<string, readonly SegmentPart[]>();
  for (const segment of segments) {
    const text = label(segment);
    if (!byLabel.has(text)) byLabel.set(text, segment);
  }
  const labels = [...byLabel.keys()].sort();
  return { labels, keys: { axis, segments: labels.map((l) => [...(byLabel.get(l) as readonly SegmentPart[])]) } };
}

export function segmentMap(cells: readonly CubeCell[], segmentColumns: readonly string[], groupBy: readonly string[]): Series[] {
  const idx = groupBy.map((c) => segmentColumns.indexOf(c));
  if (idx.some((i) => i < 0)) throw new Error(`cannot group by ${groupBy.filter((_, k) => (idx[k] as number) < 0).join(', ')}: not a segment column of this audit`);
  const label = (c: CubeCell) => groupLabel(idx.map((i) => c.segment[i] as string));
  const totals = rollup(cells, (c) => `${label(c)}${SEP}${c.action}`, (c) => ({ group: label(c), values: idx.map((i) => c.segment[i] as string), action: c.action })).map(({ meta, totals: t }) => ({
    ...meta, n: t.n, nP: t.nP, sumInvP: t.sumInvP, sumInvP2: t.sumInvP2, minP: t.minP,
  }));
  return segmentMapSeries(totals, groupBy);
}

/** The map's series from (group, action) totals, however they were summed (in the page, or by SQL over the cube). */
export function segmentMapSeries(totals: readonly GroupActionTotals[], groupBy: readonly string[]): Series[] {
  const actions = [...new Set(totals.map((c) => c.action))].filter((a) => a !== NULL_LABEL).sort();
  const byCell = new Map(totals.map((t) => [`${t.group}${SEP}${t.action}`, t]));
  const groupRows = new Map<string, number>();
  for (const t of totals) groupRows.set(t.group, (groupRows.get(t.group) ?? 0) + t.nP);
  const { labels: groups, keys } = segmentAxis('y', totals.map((t) => segmentParts(groupBy, t.values)), (segment) => groupLabel(segment.map((p) => p.value)));
  const grid = <T,>(f: (g: string, a: string) => T): T[][] => groups.map((g) => actions.map((a) => f(g, a)));
  const rowsOf = (g: string, a: string): number => byCell.get(`${g}${SEP}${a}`)?.n ?? 0;
  const groupTotal = new Map(groups.map((g) => [g, actions.reduce((s, a) => s + rowsOf(g, a), 0)]));
  const z = (g: string, a: string): number | null => {
    const n = groupRows.get(g) ?? 0;
    const t = byCell.get(`${g}${SEP}${a}`);
    if (n < 2) return null;
    const r = weightBalance(n, t?.sumInvP ?? 0, t?.sumInvP2 ?? 0);
    return Number.isFinite(r.z) ? r.z : null;
  };
  const by = groupBy.length ? groupBy.join(' × ') : 'all rows';
  return [
    // the exploration layer, as the report's map (propensity.exploration's explorationMap): each action's share of the group's rows
    {
      name: `share of each ${by} group's rows by action`, kind: 'heatmap', x: actions, y: groups,
      values: grid((g, a) => (rowsOf(g, a) > 0 ? rowsOf(g, a) / (groupTotal.get(g) as number) : null)),
      null_reasons: grid((g, a) => (rowsOf(g, a) > 0 ? null : 'never logged')),
      unit: "share of the segment's rows", segment_keys: keys,
    },
    { name: `minimum propensity by ${by} and action`, kind: 'heatmap', x: actions, y: groups, values: grid((g, a) => byCell.get(`${g}${SEP}${a}`)?.minP ?? null), unit: 'propensity', segment_keys: keys },
    { name: `balance z by ${by} and action`, kind: 'heatmap', x: actions, y: groups, values: grid(z), unit: 'z (B − 1)/SE; blank where the action is never logged', segment_keys: keys },
    { name: `rows by ${by} and action`, kind: 'heatmap', x: actions, y: groups, values: grid(rowsOf), unit: 'rows', segment_keys: keys },
  ];
}
