/**
 * The segment × action map regrouped by any subset of the segment columns, from the cube alone (no
 * scan): rows, minimum propensity and the weight-balance z of each (group, action) cell.
 */
import { rollup, SEP } from './cube/rollup.ts';
import type { CubeCell } from './cube/types.ts';
import type { Series } from './model/report.ts';
import { NULL_LABEL } from './scan/expressions.ts';
import { weightBalance } from './stats/balance.ts';

export function segmentMap(cells: readonly CubeCell[], segmentColumns: readonly string[], groupBy: readonly string[]): Series[] {
  const idx = groupBy.map((c) => segmentColumns.indexOf(c));
  if (idx.some((i) => i < 0)) throw new Error(`cannot group by ${groupBy.filter((_, k) => (idx[k] as number) < 0).join(', ')}: not a segment column of this audit`);
  const label = (c: CubeCell) => (idx.length ? idx.map((i) => c.segment[i]).join(' · ') : 'all rows');
  const actions = [...new Set(cells.map((c) => c.action))].filter((a) => a !== NULL_LABEL).sort();
  const byCell = new Map(rollup(cells, (c) => `${label(c)}${SEP}${c.action}`, () => null).map((g) => [g.key, g.totals]));
  const byGroup = new Map(rollup(cells, label, () => null).map((g) => [g.key, g.totals]));
  const groups = [...byGroup.keys()].sort();
  const grid = (f: (g: string, a: string) => number | null) => groups.map((g) => actions.map((a) => f(g, a)));
  const z = (g: string, a: string): number | null => {
    const n = byGroup.get(g)?.nP ?? 0;
    const t = byCell.get(`${g}${SEP}${a}`);
    if (n < 2) return null;
    const r = weightBalance(n, t?.sumInvP ?? 0, t?.sumInvP2 ?? 0);
    return Number.isFinite(r.z) ? r.z : null;
  };
  const by = groupBy.length ? groupBy.join(' × ') : 'all rows';
  return [
    { name: `rows by ${by} and action`, kind: 'heatmap', x: actions, y: groups, values: grid((g, a) => byCell.get(`${g}${SEP}${a}`)?.n ?? 0), unit: 'rows' },
    { name: `minimum propensity by ${by} and action`, kind: 'heatmap', x: actions, y: groups, values: grid((g, a) => byCell.get(`${g}${SEP}${a}`)?.minP ?? null), unit: 'propensity' },
    { name: `balance z by ${by} and action`, kind: 'heatmap', x: actions, y: groups, values: grid(z), unit: 'z (B − 1)/SE; blank where the action is never logged' },
  ];
}
