/** Every dialect by name; a new one is added here and in DIALECT_NAMES (dialect.ts). */
import type { Dialect, DialectName } from './dialect.ts';
import { clickhouse } from './dialect-clickhouse.ts';
import { duckdb } from './dialect-duckdb.ts';

export const DIALECTS: Readonly<Record<DialectName, Dialect>> = { duckdb, clickhouse };

export function dialectNamed(name: string): Dialect {
  const d = (DIALECTS as Readonly<Record<string, Dialect>>)[name];
  if (!d) throw new Error(`unknown SQL dialect "${name}" (known: ${Object.keys(DIALECTS).join(', ')})`);
  return d;
}
