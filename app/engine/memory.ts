/**
 * The native engine's memory: a default limit derived from the machine, the folder DuckDB spills to
 * beyond it, and the process's peak resident set for the report's `run` section (README, "Memory").
 * The user sets either with the command's --memory-limit / --temp-dir flags, or for the desktop app and
 * the engine host with COUNTERWEIGHT_MEMORY_LIMIT / COUNTERWEIGHT_TEMP_DIR in the environment.
 */
import { totalmem, tmpdir } from 'node:os';
import { join } from 'node:path';
import { EngineError } from './types.ts';

const GIB = 2 ** 30;
/** The default: a quarter of physical memory, between 1 GiB and 1.5 GiB (DuckDB's own default is 80%). */
const SHARE = 0.25;
const MIN_DEFAULT = 1 * GIB;
const MAX_DEFAULT = 1.5 * GIB;

/**
 * DuckDB's memory_limit for a machine with `total` bytes of memory, as a setting value ("1536MB").
 * An audit needs little memory except for the duplicate-id sort and the CSV copy, both of which spill, so
 * the cap keeps a 10^8-row audit near 2 GB of resident memory on any machine (bench/NOTES.md).
 */
export function defaultMemoryLimit(total: number = totalmem()): string {
  const bytes = Math.min(MAX_DEFAULT, Math.max(MIN_DEFAULT, total * SHARE));
  return `${Math.floor(bytes / 2 ** 20)}MB`;
}

const SIZE = /^\s*(\d+(?:\.\d+)?)\s*(KB|MB|GB|TB|KiB|MiB|GiB|TiB)\s*$/i;

/** A memory size as the user wrote it, checked ("2GB", "1.5GiB", "800MB"); an error names the value. */
export function memoryLimitOf(text: string, where: string): string {
  const m = SIZE.exec(text);
  if (!m || Number(m[1]) <= 0) throw new EngineError('internal', `${where} takes a size such as 2GB, 1.5GiB or 800MB, got ${JSON.stringify(text)}`);
  return `${m[1]}${m[2]}`;
}

/** A per-process folder under the system temp folder: DuckDB creates it only when it spills, and removes it on close. */
export function defaultTempDirectory(): string {
  return join(tmpdir(), `counterweight-spill-${process.pid}`);
}

export interface EngineMemory {
  readonly memoryLimit: string;
  readonly tempDirectory: string;
}

/** The limit and spill folder: what the user gave (flags first, then the environment), else the defaults. */
export function engineMemory(given: { memoryLimit?: string | undefined; tempDirectory?: string | undefined } = {}, env: NodeJS.ProcessEnv = process.env): EngineMemory {
  const limit = given.memoryLimit ?? (env.COUNTERWEIGHT_MEMORY_LIMIT || undefined);
  const folder = given.tempDirectory ?? (env.COUNTERWEIGHT_TEMP_DIR || undefined);
  return {
    memoryLimit: limit === undefined ? defaultMemoryLimit() : memoryLimitOf(limit, given.memoryLimit !== undefined ? '--memory-limit' : 'COUNTERWEIGHT_MEMORY_LIMIT'),
    tempDirectory: folder ?? defaultTempDirectory(),
  };
}

/** This process's peak resident set so far, in MB (the kernel's maximum RSS: DuckDB's memory and Node's). */
export function peakRssMb(): number {
  return Math.round(process.resourceUsage().maxRSS / 1024);
}
