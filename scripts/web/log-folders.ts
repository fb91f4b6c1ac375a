import { realpathSync, statSync } from 'node:fs';
import path from 'node:path';
import type { WirePathSource } from '../../app/engine/host/messages.ts';
import { EngineError } from '../../app/engine/types.ts';

/**
 * A browser hands a page a picked or dropped File but never its path. In hosted mode the page sends the
 * file's bare name, and the server looks for it in the folders it was started with (--logs); the page
 * then checks the size the engine reports against the File's own before trusting the match. Nothing
 * but a bare name is accepted: no path, no glob, no folder. The file found must really lie inside the
 * folder (its real path, symbolic links resolved), so a link in a log folder cannot lead outside it.
 */
export function isBareName(p: string): boolean {
  return p !== '' && !/[\\/]/.test(p) && p !== '.' && p !== '..' && !/[*?[\]{}]/.test(p) && !p.includes('\0');
}

function inside(file: string, folder: string): boolean {
  return file.startsWith(folder.endsWith(path.sep) ? folder : `${folder}${path.sep}`);
}

/** The real path of `name` in the first folder that holds a regular file of that name lying inside it; null when none does. */
export function findInFolders(name: string, folders: readonly string[]): string | null {
  return lookUp(name, folders).found;
}

function lookUp(name: string, folders: readonly string[]): { found: string | null; leaving: string | null } {
  let leaving: string | null = null;
  for (const folder of folders) {
    let realFolder: string;
    let real: string;
    try {
      realFolder = realpathSync(folder);
      real = realpathSync(path.join(folder, name));
    } catch {
      continue;
    }
    if (!inside(real, realFolder)) {
      leaving ??= path.join(folder, name);
      continue;
    }
    try {
      if (statSync(real).isFile()) return { found: real, leaving };
    } catch {
      // vanished between the two calls: not here
    }
  }
  return { found: null, leaving };
}

/** The registration with every bare name replaced by the real path of the file it names; anything else is refused. */
export function resolveLogPaths(source: WirePathSource, folders: readonly string[]): WirePathSource {
  const paths = source.paths.map((p) => {
    if (!isBareName(p)) {
      throw new EngineError('io', `The local engine opens a log by its file name only, from the folders it was started with (${folders.join(', ') || 'none'}); "${p}" is not a plain file name. Put the log in one of them, or restart it with --logs FOLDER.`);
    }
    const { found, leaving } = lookUp(p, folders);
    if (found === null && leaving !== null) {
      throw new EngineError('io', `Refused: ${leaving} is a link to a file outside its folder; the local engine reads only files that lie inside the folders it was started with.`);
    }
    if (found === null) {
      throw new EngineError('io', `The local engine found no file named ${p} in the folders it reads (${folders.join(', ') || 'none'}). Restart it with --logs FOLDER to add the folder that holds it.`);
    }
    return found;
  });
  return { ...source, paths };
}
