/** The audit's hooks into an engine for one registered relation (app/core/audit.ts, AuditRequest). */
import type { CancelSignal } from '../core/cancel.ts';
import type { Engine } from './types.ts';

type Hook<K extends 'project' | 'materialise'> = NonNullable<Engine[K]>;

/**
 * A CSV is parsed once for the row-level statements (Engine.project), and the cube, tails and clip rows read one
 * table of the log's row groups (Engine.materialise), on every engine that offers them: the command, the engine
 * host and the page's own DuckDB-Wasm.
 */
export function projectionOf(engine: Engine, relation: string): { project?: (columns: readonly string[], signal?: CancelSignal) => ReturnType<Hook<'project'>>; materialise?: (select: string, signal?: CancelSignal) => ReturnType<Hook<'materialise'>> } {
  const { project, materialise } = engine;
  return {
    ...(project ? { project: (columns: readonly string[], signal?: CancelSignal) => project.call(engine, relation, columns, signal ? { signal } : {}) } : {}),
    ...(materialise ? { materialise: (select: string, signal?: CancelSignal) => materialise.call(engine, relation, select, signal ? { signal } : {}) } : {}),
  };
}
