/**
 * What a locked engine may read: single files, each granted by its own path after its registration
 * succeeded. Globs and folders are expanded here, in Node, to the files they match; a folder is never
 * granted, so nothing added to it later (or written into it) becomes readable. Node only.
 */
import { lstatSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { quoteLiteral } from './sql-source.ts';
import { EngineError } from './types.ts';
import type { SourceFormat } from './types.ts';

/** Part files looked for under a folder, per format (as the unlocked engine's folder scan). */
const FOLDER_PATTERN: Record<SourceFormat, string> = { parquet: '**/*.parquet', csv: '**/*.csv', ndjson: '**/*.ndjson' };

const WILDCARD = /[*?[]/;

function hasWildcard(p: string): boolean {
  return WILDCARD.test(p);
}

/**
 * DuckDB's glob syntax (`*` within one path segment, `**` across segments, `?`, `[...]`) as a regular
 * expression over a whole path with forward slashes.
 */
function globRegExp(pattern: string): RegExp {
  let out = '';
  for (let i = 0; i < pattern.length; i++) {
    const ch = pattern[i] as string;
    if (ch === '*') {
      if (pattern[i + 1] === '*') {
        const slash = pattern[i + 2] === '/';
        out += slash ? '(?:.*/)?' : '.*';
        i += slash ? 2 : 1;
      } else {
        out += '[^/]*';
      }
    } else if (ch === '?') {
      out += '[^/]';
    } else if (ch === '[') {
      const end = pattern.indexOf(']', i + 2);
      if (end < 0) {
        out += '\\[';
      } else {
        const body = pattern.slice(i + 1, end).replace(/^!/, '^').replace(/\\/g, '\\\\');
        out += `[${body}]`;
        i = end;
      }
    } else {
      out += ch.replace(/[.+^${}()|\\/]/g, '\\$&');
    }
  }
  return new RegExp(`^${out}$`);
}

const slashes = (p: string): string => p.split(path.sep).join('/');

/**
 * The regular files a glob matches, sorted; the walk starts at the folder before the first wildcard.
 * Symbolic links are not matched (a link in a log folder could point anywhere); a link named on its
 * own is opened as named.
 */
function expandGlob(pattern: string): string[] {
  const absolute = path.resolve(pattern);
  const wild = absolute.search(WILDCARD);
  const base = absolute.slice(0, wild).replace(/[^/\\]*$/, '') || path.sep;
  const matcher = globRegExp(slashes(absolute));
  let entries: string[];
  try {
    entries = readdirSync(base, { recursive: true, encoding: 'utf8' });
  } catch {
    return [];
  }
  const files: string[] = [];
  for (const entry of entries) {
    const full = path.join(base, entry);
    if (!matcher.test(slashes(full))) continue;
    try {
      if (lstatSync(full).isFile()) files.push(full);
    } catch {
      // vanished or unreadable: not a match
    }
  }
  return files.sort();
}

export interface ExpandedSource {
  /** Absolute paths of the files behind the source, in glob order. */
  readonly files: string[];
  /** Whether a folder was among the paths (hive partitioning is then on by default). */
  readonly hadFolder: boolean;
}

/**
 * Files, globs and folders to the files behind them. A glob or folder that matches nothing is an io
 * error naming it; a named file that does not exist is passed on, so the engine reports it as usual.
 */
export function expandSource(paths: readonly string[], format: SourceFormat): ExpandedSource {
  const files: string[] = [];
  let hadFolder = false;
  for (const given of paths) {
    const absolute = path.resolve(given);
    let matches: string[];
    if (hasWildcard(absolute)) {
      matches = expandGlob(absolute);
    } else if (isFolder(absolute)) {
      hadFolder = true;
      matches = expandGlob(`${absolute.replace(/[/\\]+$/, '')}/${FOLDER_PATTERN[format]}`);
    } else {
      matches = [absolute];
    }
    if (matches.length === 0) throw new EngineError('io', `No file matches "${given}"; nothing was registered.`);
    for (const m of matches) if (!files.includes(m)) files.push(m);
  }
  return { files, hadFolder };
}

function isFolder(p: string): boolean {
  try {
    return statSync(p).isDirectory();
  } catch {
    return false;
  }
}

/**
 * Settings that confine DuckDB to the granted files; order matters (the list cannot change once access
 * is off, and lock_configuration keeps every setting as it is). allowed_directories stays empty.
 */
export function lockDownSql(files: Iterable<string>): string {
  return [
    `SET allowed_paths = [${[...files].map(quoteLiteral).join(', ')}]`,
    'SET allowed_directories = []',
    'SET enable_external_access = false',
    'SET lock_configuration = true',
  ].join('; ');
}
