/**
 * The profile queries in the ClickHouse dialect (release 18.16 and later), with the result columns of
 * profile.ts's profileSql, so parseProfile reads either. 18.16 has no GROUPING SETS, so where DuckDB counts
 * a categorical column per value, this reads every column row by row and counts the distinct values of
 * the columns planned `byValue` with uniqExact: every figure is still exact over the rows read, as the
 * per-value counts are. The column list comes from a `LIMIT 0` read, whose types the adapter names as
 * DuckDB does (app/engine/clickhouse-tsv.ts), so the kinds are the same as for a file.
 */
import { clickhouse as d } from '../sql/dialect-clickhouse.ts';
import type { Table } from '../table.ts';
import { columnKind, FULL_PLAN, type ColumnInfo, type ColumnPlan } from './profile.ts';

export function describeSqlClickHouse(relation: string): string {
  return `SELECT * FROM ${relation} LIMIT 0`;
}

export function parseDescribeClickHouse(table: Table): ColumnInfo[] {
  return table.names.map((name, j) => ({ name, type: table.types[j] as string }));
}

/** The text screen of profile.ts's mayParse, in RE2 (ClickHouse's match). */
const MAY_PARSE = d.literal('^(?:[\\x00-9]|[iI][nN][fF]|[nN][aA][nN]|[eE][pP][oO][cC][hH])');

export function profileSqlClickHouse(relation: string, columns: readonly ColumnInfo[], plans: readonly ColumnPlan[] = columns.map(() => FULL_PLAN)): string {
  const aliases: string[] = [];
  const parts = ['toFloat64(count()) AS `rows`'];
  const f = (x: string) => `toFloat64(${x})`;
  columns.forEach((c, j) => {
    const plan = plans[j] ?? FULL_PLAN;
    const col = d.ident(c.name);
    const kind = columnKind(c.type);
    const x = `cw_d${j}`;
    const t = `cw_t${j}`;
    const g = `cw_g${j}`;
    parts.push(`${f(`count(${col})`)} AS c${j}_nn`);
    if (kind !== 'other' && plan.byValue) parts.push(`${f(`uniqExact(${col})`)} AS c${j}_nd`);
    if (kind === 'numeric') {
      aliases.push(`toFloat64(${col}) AS ${x}`);
      parts.push(
        `${d.minIf(x, `NOT isNaN(${x})`)} AS c${j}_min`,
        `${d.maxIf(x, `NOT isNaN(${x})`)} AS c${j}_max`,
        `${d.countIf(`isNaN(${x})`)} AS c${j}_nan`,
        `${d.countIf(`isInfinite(${x})`)} AS c${j}_inf`,
        `${d.countIf(`${x} <> 0 AND ${x} <> 1`)} AS c${j}_nb`,
        `${d.countIf(`isFinite(${x}) AND ${x} <> floor(${x})`)} AS c${j}_ni`,
      );
    } else if (kind === 'text' && (plan.byValue || plan.screen)) {
      // if() evaluates both branches on every row in 18.16: the parsers read '' where the screen fails (a value
      // that fails at its first character), so only the values passing the screen are parsed in full
      const screened = `if(${g}, ${col}, '')`;
      aliases.push(`match(ifNull(${col}, ''), ${MAY_PARSE}) AND ${col} IS NOT NULL AS ${g}`, `if(${g}, toFloat64OrNull(${screened}), NULL) AS ${x}`, `if(${g}, parseDateTimeBestEffortOrNull(${screened}), NULL) AS ${t}`);
      parts.push(
        `${d.countIf(`${x} IS NOT NULL`)} AS c${j}_pn`,
        `${d.countIf(`${t} IS NOT NULL`)} AS c${j}_pt`,
        `${d.countIf(`${x} IS NULL AND position(${col}, ',') > 0 AND ${g}`)} AS c${j}_pc`,
        `${d.countIf(g)} AS c${j}_sc`,
        `${f(d.minIf(d.epochUs(t), `${t} IS NOT NULL`))} AS c${j}_tmin`,
        `${f(d.maxIf(d.epochUs(t), `${t} IS NOT NULL`))} AS c${j}_tmax`,
        `${d.minIf(x, `NOT isNaN(${x})`)} AS c${j}_min`,
        `${d.maxIf(x, `NOT isNaN(${x})`)} AS c${j}_max`,
      );
    } else if (kind === 'temporal') {
      parts.push(`${f(d.minIf(d.epochUs(col), `${col} IS NOT NULL`))} AS c${j}_tmin`, `${f(d.maxIf(d.epochUs(col), `${col} IS NOT NULL`))} AS c${j}_tmax`);
    } else if (kind === 'boolean') {
      parts.push(`${f(d.minIf(`toInt32(${col})`, `${col} IS NOT NULL`))} AS c${j}_min`, `${f(d.maxIf(`toInt32(${col})`, `${col} IS NOT NULL`))} AS c${j}_max`);
    }
  });
  return `${aliases.length ? `WITH ${aliases.join(',\n  ')}\n` : ''}SELECT\n  ${parts.join(',\n  ')}\nFROM ${relation}`;
}
