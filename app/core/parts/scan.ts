/**
 * What one part of a partitioned log is read for (app/core/parts/merge.ts says how parts merge): its profile,
 * its row groups (rows sharing cell keys, in buckets of `storageWidth` from the epoch, propensity and reward), and its
 * decision ids grouped exactly with their 64-bit hashes. Three statements over the part (the profile may take two),
 * none over any other part.
 */
import { chooseBuckets, finiteReward, rowExpressions, timeRangeUs, validPropensity, type RowExpressions } from '../scan/expressions.ts';
import { profileLog, type Profile } from '../scan/profile.ts';
import type { QueryRecord } from '../model/report.ts';
import { resolveRoles, type RoleOverrides } from '../roles/roles.ts';
import { resolveSettings } from '../settings.ts';
import type { Dialect } from '../sql/dialect.ts';
import { duckdb } from '../sql/dialect-duckdb.ts';
import type { RunQuery, Table } from '../table.ts';
import { HOUR_US, PartsError } from './merge.ts';
import type { RowGroups } from './replay.ts';

/**
 * Rows grouped by everything a row adds to the cube: segment values, action, version, bucket (the part's
 * width), propensity and the reward when finite (null otherwise), with their count (replay.ts, RowGroups).
 */
export function rowGroupsSql(relation: string, rows: RowExpressions, dialect: Dialect = duckdb): string {
  const seg = rows.segments.map((e, i) => `${e} AS s${i}`);
  const keys = [...rows.segments.map((_, i) => `s${i}`), 'a', 'v', 'b', 'p', 'r'];
  return [
    `SELECT ${keys.join(', ')}, ${dialect.toDouble('count(*)')} AS c FROM (`,
    `  SELECT *, CASE WHEN ${finiteReward('r0', dialect)} THEN r0 END AS r FROM (SELECT ${[...seg, `${rows.action} AS a`, `${rows.version ?? "''"} AS v`, `${rows.bucket} AS b`, `${rows.propensity} AS p`, `${rows.reward} AS r0`].join(', ')} FROM ${relation}) AS src`,
    `) AS rows GROUP BY ${keys.join(', ')} ORDER BY ${keys.join(', ')}`,
  ].join('\n');
}

/** Rows grouped by segment values, action, valid propensity and finite reward (or null), with their count (an exported plan's tails). */
export function weightGroupsSql(relation: string, segments: readonly string[], action: string, propensity: string, reward: string, dialect: Dialect = duckdb): string {
  const seg = segments.map((e, i) => `${e} AS s${i}`);
  const keys = [...segments.map((_, i) => `s${i}`), 'a', 'p', 'r'];
  return [
    `SELECT ${keys.join(', ')}, ${dialect.toDouble('count(*)')} AS c FROM (`,
    `  SELECT *, CASE WHEN ${finiteReward('r0', dialect)} THEN r0 END AS r FROM (SELECT ${[...seg, `${action} AS a`, `${propensity} AS p`, `${reward} AS r0`].join(', ')} FROM ${relation}) AS src`,
    `  WHERE ${validPropensity('p', dialect)}`,
    `) AS rows GROUP BY ${keys.join(', ')} ORDER BY ${keys.join(', ')}`,
  ].join('\n');
}

/** Decision ids (as text, as the duplicates query reads them) grouped exactly, with their 64-bit hash, ordered by hash then id. */
export function idGroupsSql(relation: string, idColumn: string, dialect: Dialect = duckdb): string {
  const id = dialect.ident(idColumn);
  const text = dialect.toText(id);
  return `SELECT ${dialect.hash64('id')} AS h, id, ${dialect.toDouble('count(*)')} AS c FROM (SELECT ${text} AS id FROM ${relation} WHERE ${id} IS NOT NULL) GROUP BY id ORDER BY h, id`;
}

export interface PartIdGroups {
  readonly hashes: readonly bigint[];
  readonly ids: readonly string[];
  readonly rows: readonly number[];
}

export interface PartScan {
  readonly profile: Profile;
  /** the part's rows grouped by (cell keys, p, r), in buckets of `bucketUs` from the epoch */
  readonly groups: RowGroups;
  readonly bucketUs: number;
  readonly ids: PartIdGroups | null;
  readonly queries: readonly QueryRecord[];
  /** the part's time range in microseconds (null without a time role) */
  readonly timeRange: TimeRange | null;
}

export type TimeRange = [number, number];

const DAY_US = 24 * HOUR_US;

/**
 * The bucket width a part's cells are kept in: with a set width, that width; with 'auto', the width the parts
 * so far (this one included) would get, at most a day. A longer log only gets a coarser width, and 1h, 6h and
 * 1d each divide every coarser named width (6h, 1d, 7d, 30d), so the merged log's buckets are unions of them.
 */
export function storageWidth(earlier: TimeRange | null, range: TimeRange | null, setting: string | number, maxBuckets: number): number {
  const all: TimeRange | null = earlier && range ? [Math.min(earlier[0], range[0]), Math.max(earlier[1], range[1])] : earlier ?? range;
  const b = chooseBuckets(all, setting, maxBuckets);
  if (!b) return HOUR_US;
  return setting === 'auto' ? Math.min(b.widthUs, DAY_US) : b.widthUs;
}

const col = (t: Table, name: string) => t.columns[t.names.indexOf(name)] as readonly unknown[];

/**
 * Reads one part with the roles of the whole log (every role given, as the parts' state records them), in the
 * dialect of the engine `run` speaks (a ClickHouse table filtered to one day, say). Id hashes differ between
 * dialects, so the parts of one folder are all read by one kind of engine.
 */
export async function scanPart(run: RunQuery, relation: string, overrides: RoleOverrides, settingsIn: Readonly<Record<string, number | string | boolean>> | undefined, earlier: TimeRange | null = null, d: Dialect = duckdb): Promise<PartScan> {
  const queries: QueryRecord[] = [];
  const record = (name: string, sql: string, scans: boolean) => {
    queries.push({ name, sql, scans_source: scans });
    return sql;
  };
  const settings = resolveSettings(settingsIn);
  const profile = await profileLog(run, relation, record, d);
  const roles = resolveRoles(profile, overrides);
  const missing = (['action', 'propensity', 'reward'] as const).filter((r) => !roles[r]);
  if (missing.length) throw new PartsError(`a part needs the ${missing.join(', ')} role${missing.length > 1 ? 's' : ''}, and no column was left for ${missing.length > 1 ? 'them' : 'it'}: name ${missing.length > 1 ? 'them' : 'it'} with --role ROLE=COLUMN`);
  if (roles.target_propensity) throw new PartsError('an audit merged from parts does not read a target_propensity column (its sums are row-level)');
  const range = timeRangeUs(roles, profile);
  const width = roles.time ? storageWidth(earlier, range, settings['time.bucket'], settings['time.max_buckets']) : null;
  const rows = rowExpressions(roles, profile, width === null ? null : { originUs: 0, widthUs: width, count: 1, label: '' }, d);
  const g = profile.rows === 0 ? null : await run(record('row groups', rowGroupsSql(relation, rows, d), true));
  const groups: RowGroups = g === null
    ? { segments: rows.segments.map(() => []), action: [], version: [], bucket: [], p: [], r: [], rows: [] }
    : {
      segments: rows.segments.map((_, i) => col(g, `s${i}`).map(String)),
      action: col(g, 'a').map(String),
      version: col(g, 'v').map((v) => String(v ?? '')),
      bucket: col(g, 'b').map((v) => (v === null ? 0 : Number(v))),
      p: col(g, 'p').map((v) => (v === null ? null : Number(v))),
      r: col(g, 'r').map((v) => (v === null ? null : Number(v))),
      rows: col(g, 'c').map(Number),
    };
  let ids: PartIdGroups | null = null;
  if (roles.decision_id) {
    const t = await run(record('decision ids', idGroupsSql(relation, roles.decision_id, d), true));
    ids = { hashes: col(t, 'h').map((v) => BigInt(v as bigint)), ids: col(t, 'id').map(String), rows: col(t, 'c').map(Number) };
  }
  return { profile, groups, bucketUs: width ?? HOUR_US, ids, queries, timeRange: range };
}
