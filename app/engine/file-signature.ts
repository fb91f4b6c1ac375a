/**
 * What a file's first bytes say it is, for error messages about a file that is not what its name says
 * (a CSV named .parquet, an image named .csv). Signatures: the formats' own specifications
 * (PNG §5.2, Parquet "PAR1", gzip RFC 1952 §2.3.1, zip APPNOTE 4.3.7, PDF 7.5.2, zstd RFC 8878 §3.1.1).
 * No file system here: the browser engine passes a File's first bytes, file-kind.ts a path's.
 */
import { EngineError } from './types.ts';
import type { SourceFormat } from './types.ts';

const SIGNATURES: readonly (readonly [string, number[]])[] = [
  ['a Parquet file', [0x50, 0x41, 0x52, 0x31]],
  ['a PNG image', [0x89, 0x50, 0x4e, 0x47]],
  ['a JPEG image', [0xff, 0xd8, 0xff]],
  ['a gzip-compressed file', [0x1f, 0x8b]],
  ['a zstd-compressed file', [0x28, 0xb5, 0x2f, 0xfd]],
  ['a zip archive (or an Excel workbook)', [0x50, 0x4b, 0x03, 0x04]],
  ['a PDF document', [0x25, 0x50, 0x44, 0x46]],
  ['a DuckDB database', [0, 0, 0, 0, 0, 0, 0, 0, 0x44, 0x55, 0x43, 0x4b]],
];

/** A plain description of the content from its first (up to 512) bytes. */
export function describeBytes(head: Uint8Array): string | null {
  if (head.length === 0) return 'empty (0 bytes)';
  for (const [name, bytes] of SIGNATURES) if (bytes.every((b, i) => head[i] === b)) return name;
  const text = new TextDecoder().decode(head);
  const printable = [...text].filter((ch) => ch >= ' ' || ch === '\n' || ch === '\r' || ch === '\t').length;
  if (printable >= 0.95 * [...text].length) return /^\s*[[{]/.test(text) ? 'JSON text' : 'plain text';
  return null;
}

const EXPECTED: Record<SourceFormat, readonly string[]> = {
  parquet: ['a Parquet file'],
  csv: ['plain text', 'JSON text', 'a gzip-compressed file', 'a zstd-compressed file'],
  ndjson: ['JSON text', 'a gzip-compressed file'],
};

/** withFileKind for a file whose first bytes were described by the caller (describeBytes). */
export function withKind(error: EngineError, file: string, kind: string | null, format: SourceFormat): EngineError {
  if (error.code !== 'io' || !kind) return error;
  const compressed = /\.(gz|zst)$/i.test(file);
  if (compressed && (kind === 'plain text' || kind === 'JSON text')) {
    return new EngineError('io', `${error.message} The file starts like ${kind}, so it is not compressed: drop the .gz/.zst from its name.`);
  }
  if (EXPECTED[format].includes(kind)) return error;
  const hint = kind === 'a Parquet file' ? ' rename it to .parquet' : kind === 'plain text' ? ' rename it to .csv (or .ndjson)' : ' export the log as Parquet, CSV or NDJSON';
  return new EngineError('io', `${error.message} The file starts like ${kind}, not like ${format === 'parquet' ? 'Parquet' : format === 'csv' ? 'CSV text' : 'NDJSON text'}: if it is a log,${hint}.`);
}
