/**
 * Fixture rows and the expected answers every engine must give over them, shared by the Node engine
 * suite and the browser spec. Every expected value is either a literal inserted by FIXTURE_SELECT (the
 * source of truth) or derived from those literals by the rule cited beside it.
 */
import type { Cell } from '../../app/core/table.ts';

/** The literals every fixture file is written from (by native DuckDB COPY ... TO). */
export const FIXTURE_SELECT = `
SELECT * FROM (VALUES
  (1, 'banner', 0.25, 1.0::DOUBLE, 9007199254740993::BIGINT, 12.50::DECIMAL(10,2), TIMESTAMP '2024-03-01 09:15:30.123456', true, 'he said "hi"', 'north'),
  (2, 'email', 0.5, 'NaN'::DOUBLE, -9007199254740993::BIGINT, -0.05::DECIMAL(10,2), TIMESTAMP '2024-03-01 23:59:59.999999', false, 'it''s', 'south'),
  (3, 'banner', NULL, 'Infinity'::DOUBLE, 42::BIGINT, NULL, NULL, NULL, NULL, 'north'),
  (4, 'push', 1.0, '-Infinity'::DOUBLE, NULL, 1000.00::DECIMAL(10,2), TIMESTAMP '1999-12-31 00:00:00.000001', true, 'plain, with comma', 'south')
) AS t(id, action, propensity, reward, big, price, ts, clicked, note, region)`;

export interface EngineCase {
  name: string;
  sql: (relation: string) => string;
  names: string[];
  types: string[];
  /** Row-major expected cells. */
  rows: Cell[][];
}

// Casts make the answer independent of what each reader infers (CSV has no DECIMAL, for instance).
const typedColumns = `id::INTEGER AS id, action, propensity::DOUBLE AS propensity, reward::DOUBLE AS reward, big::BIGINT AS big,
  price::DECIMAL(10,2) AS price, ts::TIMESTAMP AS ts, clicked::BOOLEAN AS clicked, note`;

export const ENGINE_CASES: EngineCase[] = [
  {
    name: 'every value survives the round trip (NULL, NaN, ±Infinity, µs timestamps, BIGINT > 2^53, DECIMAL, quotes)',
    sql: (r) => `SELECT ${typedColumns} FROM ${r} ORDER BY id`,
    names: ['id', 'action', 'propensity', 'reward', 'big', 'price', 'ts', 'clicked', 'note'],
    types: ['INTEGER', 'VARCHAR', 'DOUBLE', 'DOUBLE', 'BIGINT', 'DECIMAL(10,2)', 'TIMESTAMP', 'BOOLEAN', 'VARCHAR'],
    // Literals of FIXTURE_SELECT, in the representation of app/core/table.ts (DECIMAL as fixed-scale
    // text, TIMESTAMP as ISO-8601 UTC with microseconds, BIGINT as bigint).
    rows: [
      [1, 'banner', 0.25, 1, 9007199254740993n, '12.50', '2024-03-01T09:15:30.123456Z', true, 'he said "hi"'],
      [2, 'email', 0.5, NaN, -9007199254740993n, '-0.05', '2024-03-01T23:59:59.999999Z', false, "it's"],
      [3, 'banner', null, Infinity, 42n, null, null, null, null],
      [4, 'push', 1, -Infinity, null, '1000.00', '1999-12-31T00:00:00.000001Z', true, 'plain, with comma'],
    ],
  },
  {
    name: 'grouped aggregates are exact',
    sql: (r) => `SELECT action, count(*)::BIGINT AS n, sum(big::BIGINT)::BIGINT AS big_sum, sum(price::DECIMAL(10,2)) AS price_sum,
      min(ts::TIMESTAMP) AS first_ts, count(propensity)::INTEGER AS with_p FROM ${r} GROUP BY action ORDER BY action`,
    names: ['action', 'n', 'big_sum', 'price_sum', 'first_ts', 'with_p'],
    // DuckDB documentation (Aggregate Functions, sum): sum of DECIMAL(w,s) is DECIMAL(38,s).
    types: ['VARCHAR', 'BIGINT', 'BIGINT', 'DECIMAL(38,2)', 'TIMESTAMP', 'INTEGER'],
    rows: [
      // banner = rows 1 and 3: 9007199254740993 + 42 = 9007199254741035; price 12.50 + NULL -> 12.50 (sum skips NULL).
      ['banner', 2n, 9007199254741035n, '12.50', '2024-03-01T09:15:30.123456Z', 1],
      ['email', 1n, -9007199254740993n, '-0.05', '2024-03-01T23:59:59.999999Z', 1],
      // push = row 4: its only BIGINT is NULL, and sum over no non-NULL values is NULL (DuckDB documentation, sum).
      ['push', 1n, null, '1000.00', '1999-12-31T00:00:00.000001Z', 1],
    ],
  },
  {
    name: 'non-finite doubles compare and aggregate as IEEE 754 says',
    sql: (r) => `SELECT count(*) FILTER (WHERE isnan(reward::DOUBLE))::INTEGER AS nans,
      count(*) FILTER (WHERE isinf(reward::DOUBLE))::INTEGER AS infs, max(reward::DOUBLE) AS top, min(reward::DOUBLE) AS bottom FROM ${r}`,
    names: ['nans', 'infs', 'top', 'bottom'],
    types: ['INTEGER', 'INTEGER', 'DOUBLE', 'DOUBLE'],
    // DuckDB documentation (Numeric types, NaN and Infinity): NaN sorts above +Infinity, so max is NaN.
    rows: [[1, 2, NaN, -Infinity]],
  },
  {
    name: 'partition column reads the same from files and from hive folders',
    sql: (r) => `SELECT region::VARCHAR AS region, count(*)::INTEGER AS n FROM ${r} GROUP BY ALL ORDER BY region`,
    names: ['region', 'n'],
    types: ['VARCHAR', 'INTEGER'],
    rows: [['north', 2], ['south', 2]],
  },
];

export function rowsOf(table: { columns: readonly (readonly Cell[])[]; rowCount: number }): Cell[][] {
  return Array.from({ length: table.rowCount }, (_, i) => table.columns.map((c) => c[i] ?? null));
}
