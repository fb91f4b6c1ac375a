/** Opening log sources with the chosen engine, and the rows/columns header every command prints. */
import { existsSync } from 'node:fs';
import path from 'node:path';
import type { Engine, RegisteredSource } from '../engine/types.ts';
import { stringFlag, type FlagValues } from './args.ts';
import { UsageError } from './errors.ts';

export type EngineChoice = 'native' | 'wasm';
export const ENGINE_CHOICES: readonly EngineChoice[] = ['native', 'wasm'];

/** The --engine flag every command that opens a log takes. */
export const ENGINE_FLAG = { kind: 'string', value: 'native|wasm', choices: ENGINE_CHOICES, help: 'native DuckDB (default) or DuckDB-Wasm in Node (CSV/TSV only offline)' } as const;

export function engineChoice(flags: FlagValues): EngineChoice {
  return (stringFlag(flags, 'engine') ?? 'native') as EngineChoice;
}

export async function openEngine(choice: EngineChoice): Promise<Engine> {
  if (choice === 'wasm') {
    const { createWasmNodeEngine } = await import('../engine/wasm-node.ts');
    return createWasmNodeEngine();
  }
  const { createNativeEngine } = await import('../engine/native.ts');
  return createNativeEngine();
}

const GLOB = /[*?[]/;

/** Fails early, with the path, for a named file or folder that does not exist (globs are the engine's). */
export function checkSourcesExist(sources: readonly string[], cwd: string): void {
  for (const source of sources) {
    if (GLOB.test(source)) continue;
    if (!existsSync(path.resolve(cwd, source))) throw new UsageError(`no such file or folder: ${source}`);
  }
}

export async function registerSources(engine: Engine, sources: readonly string[], cwd: string): Promise<RegisteredSource> {
  checkSourcesExist(sources, cwd);
  const paths = sources.map((s) => (GLOB.test(s) ? path.join(cwd, s) : path.resolve(cwd, s)));
  const registered = await engine.register({ kind: 'path', paths });
  if (registered.files.length === 0) throw new UsageError(`no log files matched ${sources.join(' ')}`);
  return registered;
}

export interface ColumnInfo {
  readonly name: string;
  readonly type: string;
}

/** Column names and DuckDB types; DESCRIBE reads only metadata / the CSV sniffer sample, not the whole log. */
export async function describeColumns(engine: Engine, relation: string): Promise<ColumnInfo[]> {
  const table = await engine.query(`DESCRIBE SELECT * FROM ${relation}`);
  const names = table.columns[table.names.indexOf('column_name')] ?? [];
  const types = table.columns[table.names.indexOf('column_type')] ?? [];
  return names.map((n, i) => ({ name: String(n), type: String(types[i]) }));
}

export async function countRows(engine: Engine, relation: string): Promise<number> {
  const table = await engine.query(`SELECT count(*)::DOUBLE AS n FROM ${relation}`);
  return Number(table.columns[0]?.[0] ?? 0);
}
