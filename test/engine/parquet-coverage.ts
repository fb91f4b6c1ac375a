/**
 * The Parquet coverage files: one table of the column types a log may hold (text plain and dictionary-encoded,
 * nullable numbers, unsigned and small integers, timestamps in every unit and with a time zone, dates, decimals,
 * booleans, bytes, a list), written by native DuckDB with every codec and both data page versions. The engine test
 * (parquet-load.test.ts) holds DuckDB-Wasm's reading of each to native DuckDB's; bench/parquet-decoders.ts
 * compares the decoders on the same files.
 */
import { join } from 'node:path';

export const COVERAGE_SELECT = `
SELECT i::BIGINT AS id,
  'decision-' || lpad(i::VARCHAR, 8, '0') AS plain_text,
  ['north', 'south', 'east', 'west'][1 + i % 4] AS dict_text,
  CASE WHEN i % 7 = 0 THEN NULL ELSE (i % 100) / 100.0 END::DOUBLE AS nullable_double,
  CASE WHEN i % 5 = 0 THEN NULL ELSE i % 3 END::INTEGER AS nullable_int,
  (i % 100)::TINYINT AS tiny, (i % 1000)::USMALLINT AS small_unsigned, i::UBIGINT AS big_unsigned,
  i::FLOAT / 8 AS single,
  TIMESTAMP '2026-03-01 00:00:00.123456' + INTERVAL (i) SECOND AS ts_us,
  (TIMESTAMP '2026-03-01 00:00:00' + INTERVAL (i) SECOND)::TIMESTAMP_MS AS ts_ms,
  (TIMESTAMP '2026-03-01 00:00:00' + INTERVAL (i) SECOND)::TIMESTAMP_NS AS ts_ns,
  (TIMESTAMP '2026-03-01 00:00:00' + INTERVAL (i) SECOND)::TIMESTAMPTZ AS ts_tz,
  CASE WHEN i % 11 = 0 THEN NULL ELSE DATE '2026-03-01' + (i % 30)::INTEGER END AS day,
  ((i % 1000) / 100.0)::DECIMAL(10,2) AS price,
  (i * 1000003)::DECIMAL(30,4) AS wide_decimal,
  i % 2 = 0 AS flag,
  encode('b' || i::VARCHAR) AS bytes,
  [i, i + 1] AS pair
FROM range(20000) t(i)`;

export const CODECS = ['uncompressed', 'snappy', 'zstd', 'gzip', 'brotli', 'lz4', 'lz4_raw'] as const;
export const PAGE_VERSIONS = ['V1', 'V2'] as const;

export function coverageFile(dir: string, codec: string, version: string): string {
  return join(dir, `${codec}-${version}.parquet`);
}

/** Writes every codec × page version into `dir` through `run` (a native DuckDB connection's). */
export async function writeCoverageFiles(run: (sql: string) => Promise<unknown>, dir: string, rowGroupSize: number): Promise<{ name: string; path: string }[]> {
  const files: { name: string; path: string }[] = [];
  for (const codec of CODECS) {
    for (const version of PAGE_VERSIONS) {
      const path = coverageFile(dir, codec, version);
      await run(`COPY (${COVERAGE_SELECT}) TO '${path}' (FORMAT parquet, COMPRESSION ${codec}, PARQUET_VERSION ${version}, ROW_GROUP_SIZE ${rowGroupSize})`);
      files.push({ name: `${codec} ${version}`, path });
    }
  }
  return files;
}
