/** CSV → Parquet for the sample logs, through native DuckDB (streaming; the rows never enter JavaScript). */
import { DuckDBInstance } from '@duckdb/node-api';
import type { DuckDBConnection } from '@duckdb/node-api';
import { LOG_COLUMNS } from './log.ts';

export const sqlString = (text: string): string => `'${text.replaceAll("'", "''")}'`;
const sqlIdentifier = (name: string): string => `"${name.replaceAll('"', '""')}"`;

/** Reads the CSV with the log's declared column types (no sniffing) and keeps file order. */
export function readLogCsvSql(csvPath: string): string {
  const columns = LOG_COLUMNS.map((c) => `${sqlString(c.name)}: ${sqlString(c.type)}`).join(', ');
  return `read_csv(${sqlString(csvPath)}, header = true, auto_detect = false, delim = ',', quote = '"', escape = '"', `
    + `nullstr = '', columns = {${columns}})`;
}

/** 122880 rows per row group is DuckDB's default; written explicitly so files do not depend on the version's default. */
export function csvToParquetSql(csvPath: string, parquetPath: string): string {
  const select = LOG_COLUMNS.map((c) => `CAST(${sqlIdentifier(c.name)} AS ${c.type}) AS ${sqlIdentifier(c.name)}`).join(', ');
  return `COPY (SELECT ${select} FROM ${readLogCsvSql(csvPath)}) TO ${sqlString(parquetPath)} `
    + '(FORMAT parquet, COMPRESSION zstd, ROW_GROUP_SIZE 122880)';
}

/** A native DuckDB connection that never fetches or auto-loads extensions (there may be no network). */
export async function openOfflineDuckDB(): Promise<{ connection: DuckDBConnection; close: () => void }> {
  const instance = await DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  await connection.run('SET autoload_known_extensions = false');
  await connection.run('SET autoinstall_known_extensions = false');
  await connection.run('SET preserve_insertion_order = true');
  return {
    connection,
    close: () => {
      connection.closeSync();
      instance.closeSync();
    },
  };
}
