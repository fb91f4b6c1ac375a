/** Input fingerprint: streamed SHA-256, size and modification time of every file behind a source. */
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import path from 'node:path';
import type { InputFile } from '../core/model/report.ts';

export async function sha256File(file: string): Promise<string> {
  const hash = createHash('sha256');
  await new Promise<void>((resolve, reject) => {
    const stream = createReadStream(file);
    stream.on('data', (chunk) => hash.update(chunk));
    stream.on('error', reject);
    stream.on('end', () => resolve());
  });
  return hash.digest('hex');
}

/**
 * Paths are recorded relative to `cwd` when the file lies under it (so a report made in a checkout verifies
 * in another checkout), otherwise absolute. Files are listed in the order given (the engine's order).
 */
export async function fingerprintFiles(files: readonly string[], cwd: string = process.cwd()): Promise<InputFile[]> {
  const out: InputFile[] = [];
  for (const file of files) {
    const absolute = path.resolve(cwd, file);
    const info = await stat(absolute);
    if (!info.isFile()) throw new Error(`${file} is not a regular file`);
    out.push({ path: displayPath(absolute, cwd), bytes: info.size, sha256: await sha256File(absolute), modified: info.mtime.toISOString() });
  }
  return out;
}

export function displayPath(absolute: string, cwd: string): string {
  const relative = path.relative(cwd, absolute);
  if (relative === '' || relative.startsWith('..') || path.isAbsolute(relative)) return absolute;
  return relative.split(path.sep).join('/');
}
