import { statSync } from 'node:fs';
import path from 'node:path';
import type { NativeEngine } from '../../app/engine/native.ts';
import type { SourceSpec } from '../../app/engine/types.ts';
import { EngineError } from '../../app/engine/types.ts';

/**
 * A browser hands a page a picked or dropped File but never its path. In hosted mode the page sends the
 * file's bare name instead, and the server looks for it in the folders it was started with; the page
 * then checks the size the engine reports against the File's own before trusting the match.
 */
export function isBareName(p: string): boolean {
  return p !== '' && !/[\\/]/.test(p) && p !== '.' && p !== '..';
}

export function findInFolders(name: string, folders: readonly string[]): string | null {
  for (const folder of folders) {
    const candidate = path.join(folder, name);
    try {
      if (statSync(candidate).isFile()) return candidate;
    } catch {
      // not in this folder
    }
  }
  return null;
}

export function resolveLogPaths(source: SourceSpec, folders: readonly string[]): SourceSpec {
  if (source.kind !== 'path' || folders.length === 0) return source;
  const paths = source.paths.map((p) => {
    if (!isBareName(p)) return p;
    const found = findInFolders(p, folders);
    if (found === null) {
      throw new EngineError('io', `The local engine found no file named ${p} in the folders it reads (${folders.join(', ')}). Type the file's full path instead, or restart it with --logs FOLDER.`);
    }
    return found;
  });
  return { ...source, paths };
}

/** The engine with bare file names resolved against `folders` on register; everything else passes through. */
export function withLogFolders(engine: NativeEngine, folders: readonly string[]): NativeEngine {
  return {
    kind: 'native',
    get sourceScans() { return engine.sourceScans; },
    register: async (source) => engine.register(resolveLogPaths(source, folders)),
    query: (sql, options) => engine.query(sql, options),
    cancel: () => engine.cancel(),
    progress: () => engine.progress(),
    close: () => engine.close(),
  };
}
