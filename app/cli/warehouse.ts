/**
 * A table in a ClickHouse server as the log: `clickhouse://HOST:PORT/DB.TABLE` (app/engine/clickhouse-address.ts),
 * credentials from CLICKHOUSE_USER / CLICKHOUSE_PASSWORD / CLICKHOUSE_PASSWORD_FILE only, an optional
 * --where condition; the scans run in the server in the ClickHouse dialect and only their results come back.
 */
import type { InputFile, InputTable } from '../core/model/report.ts';
import type { Dialect } from '../core/sql/dialect.ts';
import { clickhouse } from '../core/sql/dialect-clickhouse.ts';
import { parseTableAddress, credentialsFromEnv } from '../engine/clickhouse-address.ts';
import { connectClickHouse } from '../engine/clickhouse.ts';
import type { Engine } from '../engine/types.ts';
import { UsageError } from './errors.ts';
import type { ColumnInfo } from './sources.ts';

/** What the audit command needs of a source, whatever opened it. */
export interface OpenedSource {
  readonly engine: Engine;
  readonly relation: string;
  readonly scanSql?: string;
  readonly input: { readonly files: readonly InputFile[]; readonly format: string };
  readonly columns: readonly ColumnInfo[];
  readonly dialect?: Dialect;
  readonly table?: Omit<InputTable, 'fingerprint'>;
}

export async function openClickHouseTable(address: string, where: string | undefined, env: Readonly<Record<string, string | undefined>>): Promise<OpenedSource> {
  let parsed: ReturnType<typeof parseTableAddress>;
  let credentials: ReturnType<typeof credentialsFromEnv>;
  try {
    parsed = parseTableAddress(address);
    credentials = credentialsFromEnv(env);
  } catch (e) {
    throw new UsageError((e as Error).message);
  }
  const engine = await connectClickHouse({ server: parsed.server, credentials });
  try {
    const table = await engine.registerTable(parsed.database, parsed.table, where);
    const probe = await engine.query(`SELECT * FROM ${table.relation} LIMIT 0`);
    return {
      engine,
      relation: table.relation,
      input: { files: [], format: 'clickhouse' },
      columns: probe.names.map((name, j) => ({ name, type: probe.types[j] as string })),
      dialect: clickhouse,
      table: { engine: 'clickhouse', server: engine.server, server_version: engine.version, database: parsed.database, table: parsed.table, where: table.where },
    };
  } catch (e) {
    await engine.close();
    throw e;
  }
}
