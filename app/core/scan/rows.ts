/**
 * The row-level queries (DEVELOPERS.md, "The scans of one audit"): duplicated decision ids, the largest weights of each target
 * (enough for the PSIS tail and the top-1% weight share), and a bounded number of example rows per
 * finding. Everything else comes from the cube.
 */
import { SEP } from '../cube/rollup.ts';
import type { Dialect } from '../sql/dialect.ts';
import { duckdb } from '../sql/dialect-duckdb.ts';
import { double, ident, integer, literal } from '../sql/quote.ts';
import { clipRowsSqlClickHouse, duplicatesSqlClickHouse, examplesSqlClickHouse, tailSqlClickHouse } from './rows-clickhouse.ts';
import type { Table } from '../table.ts';
import type { TargetPolicy } from '../targets/targets.ts';
import { finiteReward, validPropensity, type RowExpressions } from './expressions.ts';

/**
 * Decision ids held by more than one row, without holding every id. First pass: a hash of each id (as text, as ids
 * are reported), sorted, each compared with the one before it (a window lag); a hash equal to its predecessor is
 * shared by two rows, which two copies of one id always are. Second pass, over the rows whose hash is shared alone:
 * their ids are grouped exactly, so a collision of two different ids costs a few extra rows read and is never
 * reported, and the answer is the one grouping every id on text gives (test/bench/scan-plans.test.ts).
 *
 * The width follows `rowCount` (the profile's count; duplicatesPartitions). Up to DUPLICATES_NARROW_ROWS rows, one
 * sort of 32-bit hashes: n rows of distinct ids share about n²/2^33 pairs of them (12,000 at 10^7 rows, 0.2% of the
 * rows read back; 2^19 pairs, 0.8%, at the bound). Above, the 64-bit hash's top bits split the ids into K partitions
 * of at most about DUPLICATES_NARROW_ROWS rows each, and each partition sorts the hash's low 32 bits on its own (one
 * UNION ALL branch each, which DuckDB runs one after another): K sorts of 4 bytes a row of one partition instead of
 * one of 8 bytes a row of every id, so the memory stays that of a 2^26-row log whatever the log's size, for one more
 * read of the log per partition beyond the first (bench/NOTES.md, fifth round). Two copies of one id have one hash,
 * so they fall in one partition and are adjacent there; the second pass reads the rows whose (partition, low bits) pair
 * is shared. When the count is not known, one sort of 64-bit hashes (n²/2^65 pairs).
 */
export function duplicatesSql(relation: string, idColumn: string, examples: number, dialect: Dialect = duckdb, rowCount?: number): string {
  // 18.16 has no window functions: ClickHouse groups by id (rows-clickhouse.ts)
  if (dialect.name === 'clickhouse') return duplicatesSqlClickHouse(relation, idColumn, examples);
  const id = dialect.ident(idColumn);
  const text = dialect.toText(id);
  const k = duplicatesPartitions(rowCount);
  const summary = `SELECT count(*)::DOUBLE AS ids, coalesce(sum(c), 0)::DOUBLE AS rows_in_duplicates, coalesce(max(c), 0)::DOUBLE AS max_copies, min(id, ${dialect.integer(Math.max(1, examples))}) AS example_ids FROM counts`;
  if (k === null || k === 1) {
    const hash = k === 1 ? `CAST(${dialect.hash64(text)} >> 32 AS UINTEGER)` : dialect.hash64(text);
    return [
      `WITH hashed AS (SELECT ${hash} AS h FROM ${relation} WHERE ${id} IS NOT NULL),`,
      'shared AS (SELECT DISTINCT h FROM (SELECT h, lag(h) OVER (ORDER BY h) AS prev FROM hashed) WHERE h = prev),',
      `counts AS (SELECT id, count(*)::DOUBLE AS c FROM (SELECT ${text} AS id FROM ${relation} WHERE ${id} IS NOT NULL AND ${hash} IN (SELECT h FROM shared)) GROUP BY id HAVING count(*) > 1)`,
      summary,
    ].join('\n');
  }
  // k is a power of two: the partition is the hash's top log2(k) bits, the key (partition, low 32 bits) one UBIGINT
  const top = 64 - Math.log2(k);
  const low = (h: string) => `CAST(${h} & 4294967295 AS UINTEGER)`;
  const hashed = `(SELECT ${dialect.hash64(text)} AS h FROM ${relation} WHERE ${id} IS NOT NULL)`;
  const branches = Array.from({ length: k }, (_, p) =>
    `(SELECT DISTINCT CAST(l AS UBIGINT) + ${p * 2 ** 32} AS key FROM (SELECT l, lag(l) OVER (ORDER BY l) AS prev FROM (SELECT ${low('h')} AS l FROM ${hashed} WHERE h >> ${top} = ${p})) WHERE l = prev)`);
  return [
    `WITH shared AS (${branches.join('\nUNION ALL\n')}),`,
    `counts AS (SELECT id, count(*)::DOUBLE AS c FROM (SELECT ${text} AS id, ${dialect.hash64(text)} AS h FROM ${relation} WHERE ${id} IS NOT NULL) WHERE ((h >> ${top}) << 32) + ${low('h')} IN (SELECT key FROM shared) GROUP BY id HAVING count(*) > 1)`,
    summary,
  ].join('\n');
}

/** Up to this many rows the duplicate-id sort uses 32-bit hashes (2^26: at most 2^19 colliding pairs expected); above, each partition holds about this many. */
export const DUPLICATES_NARROW_ROWS = 2 ** 26;

/**
 * The number of partitions of the duplicate-id sort for a log of `rowCount` rows: 1 (one 32-bit sort) up to
 * DUPLICATES_NARROW_ROWS rows, else the least power of two that leaves each partition at most that many rows on
 * average (2 at 10^8 rows), at most 256; null (one 64-bit sort) when the count is not known.
 */
export function duplicatesPartitions(rowCount: number | undefined): number | null {
  if (rowCount === undefined || !Number.isFinite(rowCount)) return null;
  if (rowCount <= DUPLICATES_NARROW_ROWS) return 1;
  return Math.min(256, 2 ** Math.ceil(Math.log2(rowCount / DUPLICATES_NARROW_ROWS)));
}

export interface Duplicates {
  readonly ids: number;
  readonly rowsInDuplicates: number;
  /** rows beyond the first of each id: what removing duplicates would drop */
  readonly extraRows: number;
  readonly maxCopies: number;
  readonly exampleIds: readonly string[];
}

export function parseDuplicates(t: Table): Duplicates {
  const get = (n: string) => (t.columns[t.names.indexOf(n)] as readonly unknown[])[0];
  const ids = Number(get('ids') ?? 0);
  const rows = Number(get('rows_in_duplicates') ?? 0);
  const ex = get('example_ids');
  return { ids, rowsInDuplicates: rows, extraRows: rows - ids, maxCopies: Number(get('max_copies') ?? 0), exampleIds: Array.isArray(ex) ? ex.map(String) : [] };
}

/** SQL expression of q for a row, or null for a target column (which the row carries). */
function qExpression(target: TargetPolicy, rows: RowExpressions, segmentColumns: readonly string[], actions: readonly string[]): { expr: string; join: string } {
  switch (target.kind) {
    case 'uniform':
      return { expr: actions.length ? `CASE WHEN ${rows.action} IN (${actions.map(literal).join(', ')}) THEN ${double(1 / actions.length)} ELSE 0 END` : '0', join: '' };
    case 'always':
      return { expr: `CASE WHEN ${rows.action} = ${literal(target.action)} THEN CAST(1 AS DOUBLE) ELSE 0 END`, join: '' };
    case 'column':
      return { expr: rows.targetPropensity ?? `TRY_CAST(${ident(target.column)} AS DOUBLE)`, join: '' };
    case 'table': {
      const values: string[] = [];
      for (const [key, m] of target.probabilities) {
        const parts = target.keyColumns.length ? key.split(SEP) : [];
        for (const [a, q] of m) if (q > 0) values.push(`(${[...parts.map(literal), literal(a), double(q)].join(', ')})`);
      }
      // The VALUES columns are named so that no column of the log can clash with them in the ON clause.
      const keyNames = target.keyColumns.map((_, i) => ident(`cw:k${i}`));
      const on = target.keyColumns.map((c, i) => `${rows.segments[segmentColumns.indexOf(c)]} = t.${keyNames[i]}`);
      if (values.length === 0) return { expr: '0', join: '' };
      return {
        expr: `coalesce(t.${ident('cw:q')}, 0)`,
        join: `LEFT JOIN (VALUES ${values.join(', ')}) AS t(${[...keyNames, ident('cw:a'), ident('cw:q')].join(', ')}) ON ${[...on, `${rows.action} = t.${ident('cw:a')}`].join(' AND ')}`,
      };
    }
  }
}

/** Width of a log10(weight) histogram bin. */
export const LOG10_BIN = 0.1;

/**
 * One scan per target: its largest positive weights (descending, for PSIS and the top-1% share)
 * and a histogram of log10 w in bins of LOG10_BIN (kind 0 rows: weights; kind 1 rows: bin, count).
 */
/** The row's propensity, under a name no log column has (a log may well have a column called "p"). */
const P = ident('cw:p');

/**
 * `counted`: the relation is a table of row groups (app/core/scan/cube.ts, cubeGroupsSelect, read through
 * groupRows) whose column `counted` says how many identical rows each stands for; the answer is the one over
 * those rows. Only the by-propensity form reads groups.
 */
export function tailSql(relation: string, rows: RowExpressions, target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], limit: number, byPropensity = false, counted?: string): string {
  if (rows.dialect.name === 'clickhouse') return tailSqlClickHouse(relation, rows, target, segmentColumns, actions, limit);
  if (counted !== undefined && !(byPropensity && target.kind !== 'column')) throw new Error('a tail over row groups needs a target whose q depends on segment and action only, grouped by propensity');
  if (byPropensity && target.kind !== 'column') return tailByPropensitySql(relation, rows, target, segmentColumns, actions, limit, counted);
  const { expr, join } = qExpression(target, rows, segmentColumns, actions);
  return [
    `WITH w AS MATERIALIZED (`,
    `  SELECT (${expr}) / ${P} AS w FROM (SELECT *, ${rows.propensity} AS ${P} FROM ${relation}) AS src ${join}`,
    `  WHERE ${validPropensity(P)}`,
    `), pos AS (SELECT w FROM w WHERE w > 0 AND isfinite(w)),`,
    `top AS (SELECT 0 AS kind, w AS x, CAST(1 AS DOUBLE) AS n FROM pos ORDER BY w DESC LIMIT ${integer(limit)}),`,
    `hist AS (SELECT 1 AS kind, floor(log10(w) / ${LOG10_BIN}) * ${LOG10_BIN} AS x, count(*)::DOUBLE AS n FROM pos GROUP BY 2)`,
    `SELECT * FROM top UNION ALL SELECT * FROM hist`,
    `ORDER BY kind, x DESC`,
  ].join('\n');
}

/**
 * The same answer as tailSql, row for row, for a target whose q depends on segment and action only:
 * a row's weight q(s, a) / p is a function of (s, a, p), so rows are counted per (s, a, p) first, the
 * weights computed once per group, and the largest `limit` weights listed with their multiplicity.
 * Cheap when propensities take few distinct values.
 */
function tailByPropensitySql(relation: string, rows: RowExpressions, target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], limit: number, counted?: string): string {
  const segAlias = rows.segments.map((_, i) => ident(`cw:s${i}`));
  const actionAlias = ident('cw:a0');
  const { expr, join } = qExpression(target, { ...rows, segments: segAlias, action: actionAlias }, segmentColumns, actions);
  const used = target.kind === 'table' ? target.keyColumns.map((c) => segmentColumns.indexOf(c)) : [];
  const keys = [...used.map((i) => `${rows.segments[i]} AS ${segAlias[i]}`), `${rows.action} AS ${actionAlias}`];
  const cap = integer(limit);
  return [
    `WITH g AS (`,
    `  SELECT ${keys.join(', ')}, ${P}, ${counted === undefined ? 'count(*)' : `sum(${ident(counted)})`}::DOUBLE AS c FROM (SELECT *, ${rows.propensity} AS ${P} FROM ${relation}) AS src`,
    `  WHERE ${validPropensity(P)} GROUP BY ALL`,
    `), w AS (SELECT (${expr}) / ${P} AS w, c FROM g ${join}),`,
    `pos AS (SELECT w, sum(c) AS c FROM w WHERE w > 0 AND isfinite(w) GROUP BY w),`,
    `ranked AS (SELECT w, c, coalesce(sum(c) OVER (ORDER BY w DESC ROWS BETWEEN UNBOUNDED PRECEDING AND 1 PRECEDING), 0) AS before FROM pos),`,
    `top AS (SELECT 0 AS kind, w AS x, CAST(1 AS DOUBLE) AS n FROM (SELECT w, unnest(range(CAST(least(c, ${cap} - before) AS BIGINT))) FROM ranked WHERE before < ${cap})),`,
    `hist AS (SELECT 1 AS kind, floor(log10(w) / ${LOG10_BIN}) * ${LOG10_BIN} AS x, sum(c)::DOUBLE AS n FROM pos GROUP BY 2)`,
    `SELECT * FROM top UNION ALL SELECT * FROM hist`,
    `ORDER BY kind, x DESC`,
  ].join('\n');
}

export interface TailResult {
  /** largest positive weights, descending */
  readonly weights: number[];
  /** histogram of log10 w: lower bin edges ascending, and counts */
  readonly log10Bins: number[];
  readonly counts: number[];
}

export function parseTail(t: Table): TailResult {
  const kind = t.columns[0] as readonly unknown[];
  const x = t.columns[1] as readonly unknown[];
  const n = t.columns[2] as readonly unknown[];
  const weights: number[] = [];
  const bins: [number, number][] = [];
  for (let i = 0; i < t.rowCount; i++) {
    if (Number(kind[i]) === 0) weights.push(Number(x[i]));
    else bins.push([Math.round(Number(x[i]) / LOG10_BIN) * LOG10_BIN, Number(n[i])]);
  }
  bins.sort((a, b) => a[0] - b[0]);
  return { weights, log10Bins: bins.map((b) => Number(b[0].toFixed(6))), counts: bins.map((b) => b[1]) };
}

export interface ExampleRequest {
  /** SQL predicate over the source's own columns (built from role expressions). */
  readonly where: string;
}

/**
 * Example rows: per finding, the first `perFinding` matching rows in `orderBy` order (the time role,
 * then the decision id, where mapped). One branch per finding, each `ORDER BY ... LIMIT n`: a top-n
 * that keeps n rows in memory, not every match. On Parquet each branch reads the file itself and
 * skips row groups its time window rules out by their statistics. Where re-reading means re-parsing
 * (CSV, NDJSON; `rereadIsCheap: false`), the rows matching any finding are read once into a
 * materialised set and the branches take from it.
 */
export function examplesSql(relation: string, requests: readonly ExampleRequest[], perFinding: number, orderBy: readonly string[], rereadIsCheap = true, d?: Dialect): string {
  if (d?.name === 'clickhouse') return examplesSqlClickHouse(relation, requests, perFinding, orderBy);
  const n = integer(perFinding);
  const from = rereadIsCheap ? relation : 'm';
  const order = orderBy.length ? ` ORDER BY ${orderBy.join(', ')}` : '';
  const branches = requests.map((r, i) => `(SELECT ${i} AS __finding, * FROM ${from} WHERE (${r.where})${order} LIMIT ${n})`);
  const union = `SELECT * FROM (\n${branches.join('\nUNION ALL\n')}\n)\nORDER BY __finding${orderBy.length ? `, ${orderBy.join(', ')}` : ''}`;
  if (rereadIsCheap) return union;
  const any = requests.map((r) => `(${r.where})`).join(' OR ');
  return `WITH m AS MATERIALIZED (SELECT * FROM ${relation} WHERE ${any})\n${union}`;
}

/**
 * The rows behind the weight caps (app/core/remedies/caps.ts): every valid-propensity row whose weight exceeds
 * `above`, with its reward (NULL when not finite), at most `limit` of them. `above` is the tail's smallest listed
 * weight (or 0 when the tail listed every positive weight), so the rows are few and exactly determined; nothing is
 * summed here, so the caps' totals stay the cube's exact ones.
 */
export function clipRowsSql(relation: string, rows: RowExpressions, target: TargetPolicy, segmentColumns: readonly string[], actions: readonly string[], above: number, limit: number, counted?: string): string {
  if (rows.dialect.name === 'clickhouse') return clipRowsSqlClickHouse(relation, rows, target, segmentColumns, actions, above, limit);
  if (counted !== undefined && target.kind === 'column') throw new Error('clip rows over row groups need a target whose q depends on segment and action only');
  const { expr, join } = qExpression(target, rows, segmentColumns, actions);
  const R = ident('cw:r');
  const validQ = target.kind === 'column' ? ` AND (${expr}) >= 0 AND (${expr}) <= 1` : '';
  const bound = clipPropensityBound(target, actions, above);
  return [
    `WITH w AS (`,
    `  SELECT (${expr}) / ${P} AS w, CASE WHEN ${finiteReward(R)} THEN ${R} END AS r${counted === undefined ? '' : `, ${ident(counted)} AS ${N}`} FROM (SELECT *, ${rows.propensity} AS ${P}, ${rows.reward} AS ${R} FROM ${relation}) AS src ${join}`,
    `  WHERE ${validPropensity(P)}${validQ}${bound === null ? '' : ` AND ${P} <= ${double(bound)}`}`,
    `)`,
    // over row groups, each group kept is its rows again (at most `limit` of them: fewer than `limit` rows are kept)
    counted === undefined
      ? `SELECT w, r FROM w WHERE w > ${double(above)} AND isfinite(w) ORDER BY w DESC, r NULLS LAST LIMIT ${integer(limit)}`
      : `SELECT w, r FROM (SELECT w, r, unnest(range(least(${N}, ${integer(limit)}))) FROM w WHERE w > ${double(above)} AND isfinite(w)) ORDER BY w DESC, r NULLS LAST LIMIT ${integer(limit)}`,
  ].join('\n');
}

/** A group's row count in the clip statement over row groups, under a name no log column has. */
const N = ident('cw:n');

/** The largest q(s, a) a target gives any row: 1 for a target column (its valid values are at most 1). */
function largestQ(target: TargetPolicy, actions: readonly string[]): number {
  switch (target.kind) {
    case 'uniform':
      return actions.length ? 1 / actions.length : 0;
    case 'always':
    case 'column':
      return 1;
    case 'table': {
      let most = 0;
      for (const m of target.probabilities.values()) for (const q of m.values()) if (q > most) most = q;
      return most;
    }
  }
}

/**
 * A propensity above which no row's weight can exceed `above`, so the clip statement skips those rows before
 * it computes their weights (the join with a table target is most of its cost). w = q/p > above needs
 * p < q/above ≤ qmax/above; the bound is widened by 10^-9 of itself, far more than the rounding of q/p or of the
 * bound (2^-53 each), so a row the exact test `w > above` keeps is never dropped. Null (no bound) when above is 0.
 */
export function clipPropensityBound(target: TargetPolicy, actions: readonly string[], above: number): number | null {
  if (!(above > 0) || !Number.isFinite(above)) return null;
  const bound = (largestQ(target, actions) / above) * (1 + 1e-9);
  return Number.isFinite(bound) ? bound : null;
}

export function parseClipRows(t: Table): { w: number; r: number | null }[] {
  const w = t.columns[0] as readonly unknown[];
  const r = t.columns[1] as readonly unknown[];
  const out: { w: number; r: number | null }[] = [];
  for (let i = 0; i < t.rowCount; i++) out.push({ w: Number(w[i]), r: r[i] === null || r[i] === undefined ? null : Number(r[i]) });
  return out;
}
