/**
 * `clickhouse://HOST:PORT/DB.TABLE` (PORT: the HTTP interface's, 8123 when omitted) and the credentials,
 * which come from the environment or a file and never from the address: a user:password@ part is refused,
 * so a secret never lands in a shell history, a process list or a report.
 */
import { readFileSync } from 'node:fs';

export interface TableAddress {
  /** "http://HOST:PORT", what the report records */
  readonly server: string;
  readonly database: string;
  readonly table: string;
}

const CLICKHOUSE_SCHEME = 'clickhouse://';

export function isClickHouseAddress(source: string): boolean {
  return source.toLowerCase().startsWith(CLICKHOUSE_SCHEME);
}

const NAME = /^[A-Za-z_][A-Za-z0-9_]*$/;

export function parseTableAddress(source: string): TableAddress {
  if (!isClickHouseAddress(source)) throw new Error(`not a ClickHouse address: ${source} (expected clickhouse://HOST:PORT/DB.TABLE)`);
  const rest = source.slice(CLICKHOUSE_SCHEME.length);
  const slash = rest.indexOf('/');
  const authority = slash < 0 ? rest : rest.slice(0, slash);
  const pathPart = slash < 0 ? '' : rest.slice(slash + 1);
  if (authority.includes('@')) throw new Error('the address must not carry a user or password; set CLICKHOUSE_USER and CLICKHOUSE_PASSWORD (or CLICKHOUSE_PASSWORD_FILE) instead');
  const hp = /^(\[[0-9a-fA-F:]+\]|[A-Za-z0-9.-]+)(?::(\d{1,5}))?$/.exec(authority);
  if (!hp) throw new Error(`cannot read the host and port in ${source} (expected clickhouse://HOST:PORT/DB.TABLE)`);
  const port = hp[2] === undefined ? 8123 : Number(hp[2]);
  if (port < 1 || port > 65535) throw new Error(`port ${hp[2]} is out of range in ${source}`);
  const parts = pathPart.split('.');
  const [database, table] = parts.length === 1 ? ['default', parts[0] as string] : parts;
  if (parts.length > 2 || !table || !database || !NAME.test(database) || !NAME.test(table)) {
    throw new Error(`cannot read the table in ${source}: give it as DB.TABLE (letters, digits and _), e.g. clickhouse://127.0.0.1:8123/logs.decisions`);
  }
  return { server: `http://${hp[1]}:${port}`, database, table };
}

export interface Credentials {
  readonly user: string;
  readonly password: string;
}

/** CLICKHOUSE_USER (default "default"), CLICKHOUSE_PASSWORD or the first line of CLICKHOUSE_PASSWORD_FILE (default none). */
export function credentialsFromEnv(env: Readonly<Record<string, string | undefined>>, readFile: (p: string) => string = (p) => readFileSync(p, 'utf8')): Credentials {
  const user = env.CLICKHOUSE_USER?.trim() || 'default';
  if (env.CLICKHOUSE_PASSWORD !== undefined && env.CLICKHOUSE_PASSWORD_FILE) throw new Error('set CLICKHOUSE_PASSWORD or CLICKHOUSE_PASSWORD_FILE, not both');
  if (env.CLICKHOUSE_PASSWORD_FILE) {
    let text: string;
    try {
      text = readFile(env.CLICKHOUSE_PASSWORD_FILE);
    } catch (e) {
      throw new Error(`cannot read CLICKHOUSE_PASSWORD_FILE ${env.CLICKHOUSE_PASSWORD_FILE}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
    }
    return { user, password: text.split(/\r?\n/)[0] ?? '' };
  }
  return { user, password: env.CLICKHOUSE_PASSWORD ?? '' };
}
