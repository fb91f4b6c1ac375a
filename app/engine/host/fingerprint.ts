/** Size, modification time and SHA-256 of each registered file, streamed in Node (never the whole file in memory). */
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import type { InputFile } from '../../core/model/report.ts';

async function fingerprintFile(file: string): Promise<InputFile> {
  const info = await stat(file);
  const hash = createHash('sha256');
  for await (const chunk of createReadStream(file)) hash.update(chunk as Buffer);
  // Whole seconds, UTC, as the report has always written it.
  const modified = new Date(Math.floor(info.mtimeMs / 1000) * 1000).toISOString().replace('.000Z', 'Z');
  return { path: file, bytes: info.size, sha256: hash.digest('hex'), modified };
}

/** In path order, as the report lists its input files. */
export async function fingerprintFiles(files: readonly string[]): Promise<InputFile[]> {
  const out: InputFile[] = [];
  for (const f of [...files].sort()) out.push(await fingerprintFile(f));
  return out;
}
