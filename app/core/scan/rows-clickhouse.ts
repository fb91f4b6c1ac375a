/**
 * The row-level queries in the ClickHouse dialect (release 18.16 and later), with the result columns of
 * rows.ts and role-evidence.ts, so the same parsers read them. 18.16 has no window functions, no CTEs over
 * subqueries, no VALUES tables and no GROUPING SETS, so:
 * - duplicates group by id with HAVING (a Distributed table merges the groups of every shard first, so an
 *   id repeated across shards counts too);
 * - a tail is the top-n of the row weights (each shard sends its own top n) and the histogram;
 * - a table target's q(s, a) is a transform() lookup on the joined key;
 * - role evidence is one group-by per candidate, joined by UNION ALL.
 */
import { SEP } from '../cube/rollup.ts';
import { clickhouse as d } from '../sql/dialect-clickhouse.ts';
import type { TargetPolicy } from '../targets/targets.ts';
import { finiteReward, validPropensity, type RowExpressions } from './expressions.ts';
import type { ColumnKind } from './profile.ts';
import { LOG10_BIN, type ExampleRequest } from './rows.ts';

export function duplicatesSqlClickHouse(relation: string, idColumn: string, examples: number): string {
  const id = d.ident(idColumn);
  return [
    `SELECT toFloat64(count()) AS ids, toFloat64(sum(cw_c)) AS rows_in_duplicates, toFloat64(max(cw_c)) AS max_copies, arraySlice(arraySort(groupArray(cw_id)), 1, ${d.integer(Math.max(1, examples))}) AS example_ids`,
    `FROM (SELECT toString(${id}) AS cw_id, count() AS cw_c FROM ${relation} WHERE ${id} IS NOT NULL GROUP BY cw_id HAVING cw_c > 1)`,
  ].join('\n');
}

function qExpression(target: TargetPolicy, rows: RowExpressions, segmentColumns: readonly string[], actions: readonly string[]): string {
  switch (target.kind) {
    case 'uniform':
      return actions.length ? `if(${rows.action} IN (${actions.map(d.literal).join(', ')}), ${d.double(1 / actions.length)}, 0)` : '0';
    case 'always':
      return `if(${rows.action} = ${d.literal(target.action)}, toFloat64(1), 0)`;
    case 'column':
      return rows.targetPropensity ?? `toFloat64OrNull(toString(${d.ident(target.column)}))`;
    case 'table': {
      const keys: string[] = [];
      const qs: string[] = [];
      for (const [key, m] of target.probabilities) {
        const parts = target.keyColumns.length ? key.split(SEP) : [];
        for (const [a, q] of m) if (q > 0) { keys.push(d.literal([...parts, a].join(SEP))); qs.push(d.double(q)); }
      }
      if (keys.length === 0) return '0';
      const joined = [...target.keyColumns.map((c) => rows.segments[segmentColumns.indexOf(c)] as string), rows.action].join(`, ${d.literal(SEP)}, `);
      return `transform(concat(${joined}), [${keys.join(', ')}], [${qs.join(', ')}], toFloat64(0))`;
    }
  }
}

export function tailSqlClickHouse(relation: string, rows: RowExpressions, target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], limit: number): string {
  const q = qExpression(target, rows, segmentColumns, actions);
  // written out, not as WITH aliases: 18.16 loses an alias of a subquery over a Distributed table
  const p = `(${rows.propensity})`;
  const w = `((${q}) / ${p})`;
  const pos = `(SELECT ${w} AS w FROM ${relation} WHERE ${validPropensity(p, d)} AND ${w} > 0 AND isFinite(${w}))`;
  return [
    'SELECT kind, x, n FROM (',
    `  SELECT toUInt8(0) AS kind, w AS x, toFloat64(1) AS n FROM (SELECT w FROM ${pos} ORDER BY w DESC LIMIT ${d.integer(limit)})`,
    '  UNION ALL',
    `  SELECT toUInt8(1) AS kind, floor(log10(w) / ${LOG10_BIN}) * ${LOG10_BIN} AS x, toFloat64(count()) AS n FROM ${pos} GROUP BY x`,
    ')',
    'ORDER BY kind, x DESC',
  ].join('\n');
}

/** rows.ts's clipRowsSql: the rows above a weight, largest first, with their rewards (the remedies' cap trade-off). */
export function clipRowsSqlClickHouse(relation: string, rows: RowExpressions, target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], above: number, limit: number): string {
  const q = qExpression(target, rows, segmentColumns, actions);
  const p = `(${rows.propensity})`;
  const r = `(${rows.reward})`;
  const w = `((${q}) / ${p})`;
  const validQ = target.kind === 'column' ? ` AND (${q}) >= 0 AND (${q}) <= 1` : '';
  return `SELECT ${w} AS w, if(${finiteReward(r, d)}, ${r}, NULL) AS r FROM ${relation} WHERE ${validPropensity(p, d)}${validQ} AND ${w} > ${d.double(above)} AND isFinite(${w}) ORDER BY w DESC, r ASC NULLS LAST LIMIT ${d.integer(limit)}`;
}

export function examplesSqlClickHouse(relation: string, requests: readonly ExampleRequest[], perFinding: number, orderBy: readonly string[]): string {
  const n = d.integer(perFinding);
  const order = orderBy.length ? ` ORDER BY ${orderBy.join(', ')}` : '';
  const branches = requests.map((r, i) => `SELECT toUInt32(${i}) AS __finding, * FROM ${relation} WHERE (${r.where})${order} LIMIT ${n}`);
  return `SELECT * FROM (\n${branches.join('\nUNION ALL\n')}\n)\nORDER BY __finding${orderBy.length ? `, ${orderBy.join(', ')}` : ''}`;
}

/** role-evidence.ts's actionEvidenceSql: a branch per candidate over the first `rows` rows. */
export function actionEvidenceSqlClickHouse(relation: string, candidates: readonly string[], propensities: readonly { name: string; kind: ColumnKind }[], rows: number): string {
  const branches = candidates.map((c, i) => {
    const sums = propensities.flatMap((p, j) => {
      const x = d.numberOf(d.ident(p.name), p.kind);
      const valid = validPropensity(x, d);
      return [`toFloat64(countIf(${valid})) AS n${j}`, `if(countIf(${valid}) = 0, NULL, sumIf(1.0 / ${x}, ${valid})) AS s${j}`, `if(countIf(${valid}) = 0, NULL, sumIf(1.0 / (${x} * ${x}), ${valid})) AS q${j}`];
    });
    return `SELECT toUInt32(${i}) AS g, toString(${d.ident(c)}) AS value, count() AS rows, ${sums.join(', ')} FROM (SELECT * FROM ${relation} LIMIT ${d.integer(rows)}) GROUP BY value`;
  });
  return `SELECT * FROM (\n${branches.join('\nUNION ALL\n')}\n)\nORDER BY g, value NULLS LAST`;
}
