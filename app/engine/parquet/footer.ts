/**
 * The footer of a Parquet file read from a Blob (a browser File, or Node's fs.openAsBlob) by range:
 * the last 8 bytes (footer length and the magic "PAR1", Apache Parquet format §"File format"), then the
 * footer itself, parsed by hyparquet. Nothing else of the file is read here.
 */
import { parquetMetadataAsync } from 'hyparquet';
import type { AsyncBuffer, FileMetaData } from 'hyparquet';
import { EngineError } from '../types.ts';

/** The message native DuckDB's reader gives for a file without a Parquet footer (app/engine/errors.ts). */
function missingFooterMessage(name: string): string {
  return `Cannot read "${name}": it is not a complete Parquet file (the Parquet footer is missing): it may be cut short, or be another format under a .parquet name.`;
}

export function blobBuffer(blob: Blob): AsyncBuffer {
  return { byteLength: blob.size, slice: (start, end) => blob.slice(start, end).arrayBuffer() };
}

const MAGIC = [0x50, 0x41, 0x52, 0x31];

export async function readFooter(blob: Blob, name: string): Promise<FileMetaData> {
  // 4 bytes of magic at each end and a 4-byte footer length: anything shorter has no footer.
  if (blob.size < 12) throw new EngineError('io', missingFooterMessage(name));
  const tail = new Uint8Array(await blob.slice(blob.size - 8).arrayBuffer());
  const footerLength = new DataView(tail.buffer).getUint32(0, true);
  if (!MAGIC.every((b, i) => tail[4 + i] === b) || footerLength > blob.size - 12) throw new EngineError('io', missingFooterMessage(name));
  try {
    // One range read of exactly the footer (hyparquet accepts initialFetchSize; its typings omit it).
    return await parquetMetadataAsync(blobBuffer(blob), { initialFetchSize: footerLength + 8 } as Parameters<typeof parquetMetadataAsync>[1]);
  } catch (error) {
    throw new EngineError('io', `Cannot read "${name}": its Parquet footer cannot be parsed (${error instanceof Error ? error.message : String(error)}); the file is damaged.`);
  }
}
