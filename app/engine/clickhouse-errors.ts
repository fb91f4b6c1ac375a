/**
 * ClickHouse failures as EngineErrors with one plain message: the server's exception code picks the kind
 * (codes from ClickHouse's src/Common/ErrorCodes.cpp, stable across releases), and a network failure says
 * which address could not be reached and why. No message ever carries a password.
 */
import { EngineError, type EngineErrorCode } from './types.ts';

const CODES: Readonly<Record<number, EngineErrorCode>> = {
  60: 'sql', // UNKNOWN_TABLE
  81: 'sql', // UNKNOWN_DATABASE
  47: 'sql', // UNKNOWN_IDENTIFIER
  62: 'sql', // SYNTAX_ERROR
  43: 'sql', // ILLEGAL_TYPE_OF_ARGUMENT
  53: 'sql', // TYPE_MISMATCH
  46: 'sql', // UNKNOWN_FUNCTION
  164: 'sql', // READONLY
  192: 'auth', // UNKNOWN_USER
  193: 'auth', // WRONG_PASSWORD
  194: 'auth', // REQUIRED_PASSWORD
  195: 'auth', // IP_ADDRESS_NOT_ALLOWED
  497: 'auth', // ACCESS_DENIED
  516: 'auth', // AUTHENTICATION_FAILED
  394: 'cancelled', // QUERY_WAS_CANCELLED
  159: 'timeout', // TIMEOUT_EXCEEDED
  241: 'out-of-memory', // MEMORY_LIMIT_EXCEEDED
  158: 'too-large', // TOO_MANY_ROWS
  396: 'too-large', // TOO_MANY_ROWS_OR_BYTES
  279: 'unreachable', // ALL_CONNECTION_TRIES_FAILED (a shard of a Distributed table is down)
  210: 'unreachable', // NETWORK_ERROR
};

/** The exception text without the server's stack and "e.what()" suffix, e.g. "Table default.t doesn't exist." */
export function exceptionText(body: string): { code: number | null; text: string } {
  const first = body.trim().split('\n')[0] ?? '';
  const m = /^Code: (\d+)[.,]\s*(?:e\.displayText\(\) = )?(?:DB::Exception: )?(.*?)(?:, e\.what\(\) = .*| \(version [^)]*\)| \([A-Z_]+\)(?: \(version [^)]*\))?)?$/.exec(first);
  if (!m) return { code: null, text: first || 'the server gave no reason' };
  return { code: Number(m[1]), text: (m[2] as string).trim() };
}

export function serverError(body: string, context: { server: string; user: string }): EngineError {
  const { code, text } = exceptionText(body);
  const kind: EngineErrorCode = (code !== null ? CODES[code] : undefined) ?? 'sql';
  switch (kind) {
    case 'auth':
      return new EngineError('auth', `ClickHouse at ${context.server} refused user "${context.user}": ${text} Set CLICKHOUSE_USER and CLICKHOUSE_PASSWORD (or CLICKHOUSE_PASSWORD_FILE).`);
    case 'cancelled':
      return new EngineError('cancelled', 'The query was cancelled.');
    case 'timeout':
      return new EngineError('timeout', `ClickHouse at ${context.server} stopped the query: ${text}`);
    case 'unreachable':
      return new EngineError('unreachable', `ClickHouse at ${context.server} could not reach a shard: ${text}`);
    default:
      return new EngineError(kind, code === 60 || code === 81 ? `${text} (on ClickHouse at ${context.server})` : text);
  }
}

/** A socket error of node:http (code ECONNREFUSED, ENOTFOUND, ...), or a fetch() TypeError whose `cause` holds one. */
export function networkError(error: unknown, server: string): EngineError {
  const cause = (error as { cause?: { code?: string; message?: string } }).cause;
  const code = cause?.code ?? (error as { code?: string }).code;
  // clickhouse-http.ts: the socket stayed silent longer than the statement may run
  if (code === 'CW_IDLE_TIMEOUT') return new EngineError('timeout', `ClickHouse at ${server} sent nothing for ${Math.round(((error as { idleMs?: number }).idleMs ?? 0) / 1000)} s, longer than the query may run.`);
  const why = code === 'ECONNREFUSED' ? 'the connection was refused (is the server running, and is that its HTTP port?)'
    : code === 'ENOTFOUND' || code === 'EAI_AGAIN' ? 'no such host'
    : code === 'ECONNRESET' || code === 'UND_ERR_SOCKET' ? 'the server closed the connection'
    : code === 'EHOSTUNREACH' || code === 'ENETUNREACH' ? 'the host cannot be reached from here'
    : cause?.message ?? (error instanceof Error ? error.message : String(error));
  return new EngineError('unreachable', `Cannot reach ClickHouse at ${server}: ${why}.`);
}
