/**
 * Turns DuckDB's error text (same on native and Wasm: "<Kind> Error: <detail>\n\nLINE 1: ...") into an
 * EngineError with a code and a plain message. The SQL position marker is dropped; file names are kept.
 */
import { EngineError } from './types.ts';
import type { EngineErrorCode } from './types.ts';

const KIND_CODES: readonly (readonly [RegExp, EngineErrorCode])[] = [
  [/^INTERRUPT Error/i, 'cancelled'],
  [/^IO Error/i, 'io'],
  [/^HTTP Error/i, 'io'],
  [/^Out of Memory Error/i, 'out-of-memory'],
  [/^(Missing Extension|Extension) Error/i, 'extension-unavailable'],
  [/^(Parser|Binder|Catalog|Conversion|Invalid Input|Constraint|Not implemented|Syntax|Invalid type|Dependency|Transaction|Permission|Sequence|Invalid) Error/i, 'sql'],
  [/^(Internal|Fatal|FATAL|Invalid Configuration|Connection) Error/i, 'internal'],
];

export function plainDuckDBMessage(raw: string): string {
  const firstPart = raw.split(/\n\s*\nLINE \d+:/)[0] ?? raw;
  return firstPart.replace(/^[A-Za-z ]+ Error: /, '').trim();
}

/** DuckDB-Wasm reports some errors as JSON ({"exception_type":"Parser","exception_message":...}). */
function normalise(raw: string): string {
  if (!raw.startsWith('{')) return raw;
  try {
    const parsed = JSON.parse(raw) as { exception_type?: unknown; exception_message?: unknown };
    if (typeof parsed.exception_type === 'string' && typeof parsed.exception_message === 'string') {
      return `${parsed.exception_type.replace(/ Error$/, '')} Error: ${parsed.exception_message}`;
    }
  } catch {
    // not JSON after all: keep the text as it is
  }
  return raw;
}

export interface ErrorContext {
  /** Files of the source being registered, named in io messages when DuckDB's text does not say which. */
  files?: readonly string[];
}

export function toEngineError(error: unknown, context: ErrorContext = {}): EngineError {
  if (error instanceof EngineError) return error;
  const raw = normalise(error instanceof Error ? error.message : String(error));
  const kind = KIND_CODES.find(([re]) => re.test(raw));
  let code: EngineErrorCode = kind?.[1] ?? 'internal';
  if (/is not in the catalog, but it exists in the \w+ extension/.test(raw)) code = 'extension-unavailable';
  const detail = plainDuckDBMessage(raw);
  // "Invalid Input" about one of the source's own files (e.g. not really Parquet) is a problem with the file.
  if (code === 'sql' && /^Invalid Input Error/i.test(raw) && (context.files ?? []).some((f) => raw.includes(f))) code = 'io';
  if (code === 'cancelled') return new EngineError('cancelled', 'The query was cancelled.');
  if (code === 'io') {
    const files = context.files ?? [];
    const named = files.find((f) => raw.includes(f));
    const mention = named ?? (files.length === 1 ? files[0] : undefined);
    const missing = /^No files found that match the pattern "(.*)"$/.exec(detail);
    if (missing) return new EngineError('io', `Cannot read "${missing[1]}": no such file (nothing matches that name).`);
    const prefix = mention && !detail.includes(mention) ? `Cannot read "${mention}": ` : 'Cannot read the log: ';
    return new EngineError('io', `${prefix}${detail}`);
  }
  return new EngineError(code, detail);
}
