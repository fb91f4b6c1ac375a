/**
 * The statement gate of a locked engine: DuckDB's own parser says what a statement is before anything
 * runs. json_serialize_sql only parses (it never binds or plans, so nothing is created while checking;
 * preparing EXPORT DATABASE, by contrast, already creates its folder) and serializes SELECT statements
 * only, so everything else (COPY, EXPORT, ATTACH, CREATE, INSERT, SET, PRAGMA, CALL, EXPLAIN ...) is
 * refused. DESCRIBE and SUMMARIZE parse as SELECTs.
 */
import { EngineError } from './types.ts';

/** One parameter: the statement text, never spliced into the check itself. */
export const STATEMENT_CHECK_SQL = 'SELECT json_serialize_sql($1::VARCHAR) AS statement';

/** Query node types a single read may have (DuckDB's QueryNodeType names). */
const READ_NODES = new Set(['SELECT_NODE', 'SET_OPERATION_NODE', 'CTE_NODE', 'RECURSIVE_CTE_NODE']);

/** Throws unless json_serialize_sql's answer describes exactly one read statement. */
export function assertReadStatement(serialized: string, sql: string): void {
  let parsed: { error?: boolean; error_message?: string; error_type?: string; statements?: { node?: { type?: string } }[] };
  try {
    parsed = JSON.parse(serialized) as typeof parsed;
  } catch {
    throw new EngineError('sql', 'Refused: the statement could not be checked.');
  }
  const head = sql.trim().slice(0, 60).replace(/\s+/g, ' ');
  if (parsed.error) {
    const message = parsed.error_message ?? 'not a statement';
    if (/Only SELECT statements/i.test(message)) throw new EngineError('sql', `Refused: the engine runs reads only (SELECT, DESCRIBE), not "${head}…".`);
    throw new EngineError('sql', `Parser Error: ${message}`);
  }
  const statements = parsed.statements ?? [];
  if (statements.length !== 1) throw new EngineError('sql', `Refused: one statement at a time, got ${statements.length}.`);
  const type = statements[0]?.node?.type ?? '';
  if (!READ_NODES.has(type)) throw new EngineError('sql', `Refused: the engine runs reads only, not a ${type || 'statement of unknown type'}.`);
}
