/** Opening log sources with the chosen engine, and the rows/columns header every command prints. */
import { existsSync } from 'node:fs';
import path from 'node:path';
import type { Engine, RegisteredSource } from '../engine/types.ts';
import { stringFlag, type CommandSpec, type FlagValues } from './args.ts';
import { UsageError } from './errors.ts';

export type EngineChoice = 'native' | 'wasm';
const ENGINE_CHOICES: readonly EngineChoice[] = ['native', 'wasm'];

/** The --engine flag every command that opens a log takes. */
export const ENGINE_FLAG = { kind: 'string', value: 'native|wasm', choices: ENGINE_CHOICES, help: 'native DuckDB (default) or DuckDB-Wasm in Node (CSV/TSV only offline)' } as const;

/** A command that reads one log (its parts as positionals) on the engine `--engine` names. */
export function logCommand(name: string, summary: string): CommandSpec {
  return { name, summary, positionals: { name: 'source', min: 1, max: Infinity }, flags: { engine: ENGINE_FLAG } };
}

export function engineChoice(flags: FlagValues): EngineChoice {
  return (stringFlag(flags, 'engine') ?? 'native') as EngineChoice;
}

/** The native engine's memory flags (app/engine/memory.ts has the defaults). */
export const MEMORY_FLAGS = {
  'memory-limit': { kind: 'string', value: 'SIZE', help: 'native engine: memory DuckDB may use before it spills to disk, e.g. 2GB (default: a quarter of physical memory, 1 to 1.5 GB)' },
  'temp-dir': { kind: 'string', value: 'FOLDER', help: 'native engine: the folder it spills to beyond --memory-limit (default: a new folder in the system temp folder, removed afterwards)' },
} as const;

export interface EngineMemoryFlags {
  readonly memoryLimit?: string;
  readonly tempDirectory?: string;
}

const SIZE = /^\d+(\.\d+)?\s*(KB|MB|GB|TB|KiB|MiB|GiB|TiB)$/i;

/** --memory-limit and --temp-dir, checked; they apply to the native engine only. */
export function memoryFlags(flags: FlagValues, choice: EngineChoice, cwd: string): EngineMemoryFlags {
  const memoryLimit = stringFlag(flags, 'memory-limit');
  const tempDir = stringFlag(flags, 'temp-dir');
  if ((memoryLimit !== undefined || tempDir !== undefined) && choice !== 'native') throw new UsageError('--memory-limit and --temp-dir apply to the native engine only');
  if (memoryLimit !== undefined && !(SIZE.test(memoryLimit) && parseFloat(memoryLimit) > 0)) throw new UsageError(`--memory-limit takes a size such as 2GB, 1.5GiB or 800MB, got '${memoryLimit}'`);
  return { ...(memoryLimit !== undefined ? { memoryLimit } : {}), ...(tempDir !== undefined ? { tempDirectory: path.resolve(cwd, tempDir) } : {}) };
}

export async function openEngine(choice: EngineChoice, memory: EngineMemoryFlags = {}): Promise<Engine> {
  if (choice === 'wasm') {
    const { createWasmNodeEngine } = await import('../engine/wasm-node.ts');
    return createWasmNodeEngine();
  }
  const { createNativeEngine } = await import('../engine/native.ts');
  return createNativeEngine(memory);
}

const GLOB = /[*?[]/;

/** Fails early, with the path, for a named file or folder that does not exist (globs are the engine's). */
function checkSourcesExist(sources: readonly string[], cwd: string): void {
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

/** Opens the engine the flags name, registers the command's sources in it, runs `use`, and closes the engine. */
export async function withSources<T>(flags: FlagValues, sources: readonly string[], cwd: string, use: (engine: Engine, source: RegisteredSource) => Promise<T>): Promise<T> {
  const engine = await openEngine(engineChoice(flags));
  try {
    return await use(engine, await registerSources(engine, sources, cwd));
  } finally {
    await engine.close();
  }
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

