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

function plainDuckDBMessage(raw: string): string {
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

/**
 * DuckDB's reader errors carry a list of possible fixes and the reader's whole option dump; the user gets
 * what is wrong, where (file, line), and one thing to do. Returns null for errors that are not about reading.
 */
function readerProblem(raw: string): { file?: string; message: string } | null {
  const file = /^\s*file = (.+)$/m.exec(raw)?.[1]?.trim() ?? /(?:sniffing|read) file "([^"]+)"/.exec(raw)?.[1];
  const at = file ? { file } : {};
  const line = /CSV Error on Line: (\d+)/.exec(raw)?.[1];
  if (/Invalid unicode|not utf-8 encoded/i.test(raw)) {
    return { ...at, message: `it is not UTF-8 text (invalid byte sequence${line ? ` near line ${line}` : ''}). Save it as UTF-8, e.g. iconv -f latin1 -t utf-8 old.csv > new.csv, and audit the copy.` };
  }
  if (/It was not possible to automatically detect the CSV parsing dialect/.test(raw)) {
    return { ...at, message: 'it does not read as CSV: no delimiter splits its lines into the same number of fields. Check that it is a CSV or TSV text file.' };
  }
  if (line) {
    const reason = raw.split('\n').map((l) => l.trim()).find((l) => l && !/^(Invalid Input Error|CSV Error|Original Line|Possible|file =)/.test(l) && !/^[a-z_]+ = /.test(l));
    return { ...at, message: `line ${line}: ${reason ?? 'the row cannot be parsed'}` };
  }
  const mismatch = /schema mismatch in glob: (.*?)(\n|$)/.exec(raw);
  if (mismatch) {
    return { message: `the files do not share one schema: ${mismatch[1]} Audit files with the same columns together.` };
  }
  if (/No magic bytes found at end of file|too small to be a Parquet file/.test(raw)) {
    const named = /file '([^']+)'/.exec(raw)?.[1];
    return { ...(named ? { file: named } : at), message: 'it is not a complete Parquet file (the Parquet footer is missing): it may be cut short, or be another format under a .parquet name.' };
  }
  return null;
}

export function toEngineError(error: unknown, context: ErrorContext = {}): EngineError {
  if (error instanceof EngineError) return error;
  const raw = normalise(error instanceof Error ? error.message : String(error));
  const kind = KIND_CODES.find(([re]) => re.test(raw));
  let code: EngineErrorCode = kind?.[1] ?? 'internal';
  if (/is not in the catalog, but it exists in the \w+ extension/.test(raw)) code = 'extension-unavailable';
  if (code === 'io' || code === 'sql') {
    const problem = readerProblem(raw);
    if (problem) {
      const file = problem.file ?? (context.files?.length === 1 ? context.files[0] : undefined);
      return new EngineError('io', `Cannot read ${file ? `"${file}"` : 'the log'}: ${problem.message}`);
    }
  }
  const detail = plainDuckDBMessage(raw);
  if (/^Permission Error/i.test(raw)) return new EngineError('io', `Refused: ${detail}. This engine reads only the logs that were opened with it.`);
  // "Invalid Input" about one of the source's own files (e.g. not really Parquet) is a problem with the file.
  if (code === 'sql' && /^Invalid Input Error/i.test(raw) && (context.files ?? []).some((f) => raw.includes(f))) code = 'io';
  if (code === 'cancelled') return new EngineError('cancelled', 'The query was cancelled.');
  // DuckDB's advice after the first line (temp_directory, persistent storage) is about its own set-up, not the user's.
  if (code === 'out-of-memory') return new EngineError('out-of-memory', `Out of memory: ${detail.split('\n')[0]}`);
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
