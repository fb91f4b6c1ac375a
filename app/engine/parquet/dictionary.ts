/**
 * The values of a Parquet file's low-cardinality text columns, read from their dictionary pages alone, so that
 * DuckDB-Wasm can hold those columns as one- or two-byte ENUMs (load.ts) instead of a 16-byte string entry per
 * row. A column chunk is dictionary-encoded throughout when its data pages all reference the dictionary
 * (Apache Parquet format, "Dictionary encoding": the dictionary page comes first in the chunk, at
 * `dictionary_page_offset`, and the data pages begin at `data_page_offset`). The page is read by range,
 * decompressed and its PLAIN byte arrays decoded by hyparquet's page reader. Only the dictionary pages are
 * read: a 10M-row log's five text columns take 410 reads of a few hundred bytes each.
 */
import type { ColumnChunk, ColumnMetaData, FileMetaData } from 'hyparquet';
import { compressors } from 'hyparquet-compressors';
import { parquetHeader } from 'hyparquet/src/column.js';
import { decompressPage } from 'hyparquet/src/datapage.js';
import { readPlain } from 'hyparquet/src/plain.js';
import type { ParquetColumn } from './schema.ts';

/** At most this many distinct values make a column an ENUM (one or two bytes a row, DuckDB documentation "Enum Data Type"); the list is part of the SQL that makes it. */
export const MAX_ENUM_VALUES = 4096;
/** A dictionary page larger than this is a high-cardinality column's (ids, free text): it stays text. */
const MAX_DICTIONARY_PAGE_BYTES = 64 * 1024;
/** Row groups whose dictionary pages are read at once. */
const BATCH = 16;

const DICTIONARY_ENCODINGS: ReadonlySet<string> = new Set(['PLAIN_DICTIONARY', 'RLE_DICTIONARY']);
/** Level encodings, which say nothing of how the values are stored. */
const LEVEL_ENCODINGS: ReadonlySet<string> = new Set(['RLE', 'BIT_PACKED']);

/**
 * True when every data page of the chunk is dictionary-encoded. With `encoding_stats` (parquet-mr, arrow-rs)
 * that is read per page; without it (DuckDB's writer), the chunk's encodings must all be dictionary or level
 * encodings, since a writer that falls back to PLAIN lists PLAIN among them.
 */
export function dictionaryOnly(meta: ColumnMetaData): boolean {
  if (meta.dictionary_page_offset === undefined) return false;
  const stats = meta.encoding_stats;
  if (stats && stats.length) return stats.every((s) => s.page_type === 'DICTIONARY_PAGE' || DICTIONARY_ENCODINGS.has(s.encoding));
  return meta.encodings.some((e) => DICTIONARY_ENCODINGS.has(e)) && meta.encodings.every((e) => DICTIONARY_ENCODINGS.has(e) || LEVEL_ENCODINGS.has(e));
}

/** The candidates: flat text columns (what DuckDB reads as VARCHAR) whose chunks are all dictionary-encoded. */
function candidates(metadata: FileMetaData, columns: readonly ParquetColumn[]): ParquetColumn[] {
  return columns.filter((c) => c.duckdbType === 'VARCHAR' && c.leaves.length === 1 && c.element.type === 'BYTE_ARRAY' &&
    metadata.row_groups.every((g) => {
      const meta = g.columns[c.leaves[0] as number]?.meta_data;
      return meta !== undefined && !meta.encodings.includes('DELTA_BYTE_ARRAY') && dictionaryOnly(meta) &&
        Number(meta.data_page_offset) - Number(meta.dictionary_page_offset) <= MAX_DICTIONARY_PAGE_BYTES;
    }));
}

/** The decoded entries of one chunk's dictionary page, or null when the bytes there are not one. */
async function dictionaryPage(blob: Blob, chunk: ColumnChunk): Promise<string[] | null> {
  const meta = chunk.meta_data as ColumnMetaData;
  const start = Number(meta.dictionary_page_offset);
  const bytes = new Uint8Array(await blob.slice(start, Number(meta.data_page_offset)).arrayBuffer());
  const reader = { view: new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength), offset: 0 };
  const header = parquetHeader(reader);
  if (header.type !== 'DICTIONARY_PAGE' || !header.dictionary_page_header || reader.offset + header.compressed_page_size > bytes.byteLength) return null;
  if (header.dictionary_page_header.num_values > MAX_ENUM_VALUES) return null;
  const page = decompressPage(bytes.subarray(reader.offset, reader.offset + header.compressed_page_size), Number(header.uncompressed_page_size), meta.codec, compressors);
  const entries = readPlain({ view: new DataView(page.buffer, page.byteOffset, page.byteLength), offset: 0 }, 'BYTE_ARRAY', header.dictionary_page_header.num_values, undefined);
  const decoder = new TextDecoder('utf-8', { fatal: true });
  return Array.from(entries as ArrayLike<Uint8Array>, (b) => decoder.decode(b));
}

/**
 * Each low-cardinality text column's distinct values over the whole file (sorted by code unit, so the same file
 * always gives the same ENUM), from the dictionary pages of all its row groups. A column is left out when a
 * chunk is not dictionary-encoded throughout, a page cannot be read as a dictionary, an entry is not UTF-8, or
 * it has more than MAX_ENUM_VALUES values. A value outside these (a writer whose metadata misleads) fails the
 * load's cast, and the load then keeps that part's text as text (load.ts).
 */
export async function enumValues(blob: Blob, metadata: FileMetaData, columns: readonly ParquetColumn[]): Promise<Map<string, string[]>> {
  const seen = new Map(candidates(metadata, columns).map((c) => [c, new Set<string>()]));
  // The pages of BATCH row groups at once: small range reads, which the browser serves in parallel, with at
  // most BATCH × columns × MAX_DICTIONARY_PAGE_BYTES in memory.
  for (let first = 0; first < metadata.row_groups.length && seen.size > 0; first += BATCH) {
    const groups = metadata.row_groups.slice(first, first + BATCH);
    await Promise.all([...seen].map(async ([column, values]) => {
      const pages = await Promise.all(groups.map((g) => dictionaryPage(blob, g.columns[column.leaves[0] as number] as ColumnChunk).catch(() => null)));
      for (const page of pages) for (const v of page ?? []) values.add(v);
      if (pages.includes(null) || values.size > MAX_ENUM_VALUES) seen.delete(column);
    }));
  }
  return new Map([...seen].filter(([, values]) => values.size > 0).map(([column, values]) => [column.name, [...values].sort()]));
}
