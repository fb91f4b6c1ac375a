/**
 * The source fingerprint a re-audit compares: the row count and an order-independent hash aggregate
 * over the role columns, computed in the engine in one pass (Dialect.rowHashSum), so the same rows in any
 * order, file split or shard split give the same fingerprint and a changed, added or dropped row does not
 * (up to a 2^-64 chance).
 */
import type { Dialect } from '../sql/dialect.ts';
import { column, type Table } from '../table.ts';

export interface SourceFingerprint {
  readonly rows: number;
  /** the hash sum as a decimal integer */
  readonly hash: string;
  /** the role columns hashed, in order */
  readonly columns: readonly string[];
  /** how the hash was computed (Dialect.fingerprintHash): fingerprints compare only when this is equal */
  readonly method: string;
}

export function fingerprintSql(d: Dialect, relation: string, columns: readonly string[]): string {
  if (columns.length === 0) throw new Error('a fingerprint needs at least one column');
  return `SELECT ${d.countIf('1 = 1')} AS ${d.ident('rows')}, ${d.rowHashSum(columns.map((c) => d.ident(c)))} AS ${d.ident('hash')} FROM ${relation}`;
}

export function parseFingerprint(d: Dialect, table: Table, columns: readonly string[]): SourceFingerprint {
  const rows = Number(column(table, 'rows')[0] ?? 0);
  const h = column(table, 'hash')[0];
  return { rows, hash: h === null || h === undefined ? '0' : String(h), columns, method: d.fingerprintHash };
}
