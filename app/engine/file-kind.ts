/** The file-kind hint of app/engine/file-signature.ts for a file named by path (Node engines). */
import { closeSync, openSync, readSync } from 'node:fs';
import type { EngineError } from './types.ts';
import type { SourceFormat } from './types.ts';
import { describeBytes, withKind } from './file-signature.ts';

/** A plain description of the file's content from its first bytes, or null when it cannot be read. */
function describeFileStart(file: string): string | null {
  let head: Buffer;
  try {
    const fd = openSync(file, 'r');
    try {
      head = Buffer.alloc(512);
      head = head.subarray(0, readSync(fd, head, 0, head.length, 0));
    } finally {
      closeSync(fd);
    }
  } catch {
    return null;
  }
  return describeBytes(head);
}

/**
 * Adds what the file really looks like to an io error about a single file whose content does not match
 * the format it is read as; other errors are returned as they are.
 */
export function withFileKind(error: EngineError, files: readonly string[], format: SourceFormat | undefined): EngineError {
  if (error.code !== 'io' || files.length !== 1 || !format) return error;
  const file = files[0] as string;
  return withKind(error, file, describeFileStart(file), format);
}

