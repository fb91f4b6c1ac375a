import path from 'node:path';
import { readFile, rename, stat, writeFile } from 'node:fs/promises';
import type { LaunchLog, RecentLog, ReportFormat, ReportFileText, SaveReportRequest, TargetTableFile } from './ipc-contract.ts';
import { MAX_REPORT_CHARS } from './ipc-schema.ts';

export const RECENT_LIMIT = 10;
const RECENT_FILE = 'recent-logs.json';
/** A target policy table is a few rows per (segment, action); anything larger is not one. */
export const TARGET_TABLE_MAX_BYTES = 5 * 1024 * 1024;

const LOG_FILTERS = [
  { name: 'Decision logs', extensions: ['parquet', 'csv', 'tsv', 'ndjson', 'jsonl'] },
  { name: 'All files', extensions: ['*'] },
];
export const TARGET_TABLE_FILTERS = [{ name: 'Target policy table', extensions: ['csv', 'json'] }];
export const REPORTS_FILTERS = [{ name: 'Counterweight reports (JSON)', extensions: ['json'] }];
/** An audit history of more reports than this is not read by picking files. */
export const MAX_HISTORY_REPORTS = 200;
const REPORT_FILTERS: Record<ReportFormat, { name: string; extensions: string[] }[]> = {
  json: [{ name: 'Report (JSON)', extensions: ['json'] }],
  html: [{ name: 'Report (HTML)', extensions: ['html'] }],
  pdf: [{ name: 'Report (PDF)', extensions: ['pdf'] }],
};

/** The arguments a user gave, without the Electron binary and (when unpackaged) the main script. */
export function userArgs(argv: readonly string[], isPackaged: boolean): string[] {
  return argv.slice(isPackaged ? 1 : 2);
}

/**
 * The log to open at launch: the positional arguments (files, folders or globs, resolved against
 * `cwd`), else the demo log. Switches (`--inspect`, Chromium flags) are skipped; after `--` every
 * argument is positional.
 */
export function parseLaunchArgs(args: readonly string[], options: { cwd: string; demoLog: string }): LaunchLog {
  const paths: string[] = [];
  let positionalOnly = false;
  for (const arg of args) {
    if (!positionalOnly && arg === '--') {
      positionalOnly = true;
      continue;
    }
    if (!positionalOnly && arg.startsWith('-')) continue;
    if (arg.trim() === '') continue;
    paths.push(path.resolve(options.cwd, arg));
  }
  if (paths.length > 0) return { paths, source: 'argument' };
  return { paths: [path.resolve(options.demoLog)], source: 'demo' };
}

export class PathNotGrantedError extends Error {
  override readonly name = 'PathNotGrantedError';
}

/** The paths the renderer may have read: ones the user picked, passed at launch, or opened before. */
export class PathGrants {
  readonly #granted = new Set<string>();

  grant(paths: readonly string[]): void {
    for (const p of paths) this.#granted.add(path.resolve(p));
  }

  has(p: string): boolean {
    return this.#granted.has(path.resolve(p));
  }

  /** Throws when any path was not granted, naming the first one. */
  assertGranted(paths: readonly string[]): void {
    const refused = paths.find((p) => !this.has(p));
    if (refused !== undefined) throw new PathNotGrantedError(`The app may only read files you opened; "${refused}" was not opened.`);
  }
}

/** Tolerates a missing, empty or corrupt file (a list that cannot be read is an empty list). */
export function parseRecent(text: string): RecentLog[] {
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch {
    return [];
  }
  if (!Array.isArray(parsed)) return [];
  return parsed.filter(isRecentLog).slice(0, RECENT_LIMIT);
}

/** Newest first, one entry per path, at most `limit` entries. */
export function mergeRecent(list: readonly RecentLog[], paths: readonly string[], openedAt: string, limit = RECENT_LIMIT): RecentLog[] {
  const key = recentKey(paths);
  const entry: RecentLog = { paths: [...paths], openedAt };
  return [entry, ...list.filter((r) => recentKey(r.paths) !== key)].slice(0, limit);
}

function serializeRecent(list: readonly RecentLog[]): string {
  return `${JSON.stringify(list, null, 2)}\n`;
}

export interface RecentStore {
  load(): Promise<RecentLog[]>;
  add(paths: readonly string[], openedAt?: string): Promise<RecentLog[]>;
}

/** Recent logs kept as JSON in the app's userData folder; written through a temp file and a rename. */
export function recentStore(userDataDir: string): RecentStore {
  const file = path.join(userDataDir, RECENT_FILE);
  const load = async (): Promise<RecentLog[]> => {
    try {
      return parseRecent(await readFile(file, 'utf8'));
    } catch {
      return [];
    }
  };
  return {
    load,
    async add(paths, openedAt = new Date().toISOString()) {
      const next = mergeRecent(await load(), paths, openedAt);
      const temp = `${file}.${process.pid}.tmp`;
      await writeFile(temp, serializeRecent(next), 'utf8');
      await rename(temp, file);
      return next;
    },
  };
}

/** The parts of Electron's dialog module used here, with the parent window already bound. */
export interface DialogApi {
  showOpenDialog(options: {
    title?: string;
    filters?: { name: string; extensions: string[] }[];
    properties?: ('openFile' | 'openDirectory' | 'multiSelections')[];
  }): Promise<{ canceled: boolean; filePaths: string[] }>;
  showSaveDialog(options: {
    title?: string;
    defaultPath?: string;
    filters?: { name: string; extensions: string[] }[];
  }): Promise<{ canceled: boolean; filePath?: string }>;
}

export async function chooseLog(dialog: DialogApi): Promise<string[] | null> {
  const result = await dialog.showOpenDialog({ title: 'Open a decision log', filters: LOG_FILTERS, properties: ['openFile', 'multiSelections'] });
  return result.canceled || result.filePaths.length === 0 ? null : result.filePaths;
}

export type ReadText = (filePath: string) => Promise<string>;
export type FileSize = (filePath: string) => Promise<number>;

export async function chooseTargetTable(
  dialog: DialogApi,
  read: ReadText = (p) => readFile(p, 'utf8'),
  size: FileSize = async (p) => (await stat(p)).size,
): Promise<TargetTableFile | null> {
  const result = await dialog.showOpenDialog({ title: 'Open a target policy table', filters: TARGET_TABLE_FILTERS, properties: ['openFile'] });
  const chosen = result.canceled ? undefined : result.filePaths[0];
  if (chosen === undefined) return null;
  const extension = path.extname(chosen).toLowerCase();
  if (extension !== '.csv' && extension !== '.json') {
    throw new Error(`A target policy table must be a .csv or .json file; "${path.basename(chosen)}" is neither.`);
  }
  const bytes = await size(chosen);
  if (bytes > TARGET_TABLE_MAX_BYTES) {
    throw new Error(`"${path.basename(chosen)}" is ${bytes} bytes; a target policy table may be at most ${TARGET_TABLE_MAX_BYTES} bytes.`);
  }
  return { path: chosen, text: await read(chosen) };
}

/**
 * The report files for an audit history: several JSON files, each read whole (a report is at most
 * MAX_REPORT_CHARS); the renderer validates each one and names those that are not reports.
 */
export async function chooseReports(
  dialog: DialogApi,
  read: ReadText = (p) => readFile(p, 'utf8'),
  size: FileSize = async (p) => (await stat(p)).size,
): Promise<ReportFileText[] | null> {
  const result = await dialog.showOpenDialog({ title: 'Open saved audit reports', filters: REPORTS_FILTERS, properties: ['openFile', 'multiSelections'] });
  if (result.canceled || result.filePaths.length === 0) return null;
  if (result.filePaths.length > MAX_HISTORY_REPORTS) throw new Error(`${result.filePaths.length} files were chosen; a history reads at most ${MAX_HISTORY_REPORTS} reports.`);
  const out: ReportFileText[] = [];
  for (const chosen of result.filePaths) {
    const name = path.basename(chosen);
    if (path.extname(chosen).toLowerCase() !== '.json') throw new Error(`A saved report is a .json file; "${name}" is not.`);
    const bytes = await size(chosen);
    if (bytes > MAX_REPORT_CHARS) throw new Error(`"${name}" is ${bytes} bytes; a report may be at most ${MAX_REPORT_CHARS} bytes.`);
    out.push({ name, text: await read(chosen) });
  }
  return out;
}

/** A bare file name with the format's extension; folders and odd characters are dropped. */
export function safeFileName(suggested: string | undefined, format: ReportFormat): string {
  const base = path.basename((suggested ?? '').replace(/\\/g, '/')).replace(/[^\w.\- ]+/g, '_').trim();
  const stem = base.replace(/\.(json|html|pdf)$/i, '') || 'counterweight-report';
  return `${stem}.${format}`;
}

/** Asks where to save; refuses to overwrite a log the user opened (input files are never modified). */
export async function chooseSavePath(dialog: DialogApi, format: ReportFormat, suggestedName: string | undefined, grants: PathGrants): Promise<string | null> {
  const result = await dialog.showSaveDialog({
    title: format === 'pdf' ? 'Print the report to PDF' : 'Save the report',
    defaultPath: safeFileName(suggestedName, format),
    filters: REPORT_FILTERS[format],
  });
  if (result.canceled || result.filePath === undefined || result.filePath === '') return null;
  if (grants.has(result.filePath)) throw new Error(`"${path.basename(result.filePath)}" is an opened log; a report cannot be saved over it.`);
  return result.filePath;
}

export type WriteFile = (filePath: string, contents: string | Uint8Array) => Promise<void>;

export async function saveReport(
  dialog: DialogApi,
  request: SaveReportRequest,
  grants: PathGrants,
  write: WriteFile = (p, c) => writeFile(p, c),
): Promise<string | null> {
  const target = await chooseSavePath(dialog, request.format, request.suggestedName, grants);
  if (target === null) return null;
  await write(target, request.contents);
  return target;
}

function recentKey(paths: readonly string[]): string {
  return JSON.stringify(paths);
}

function isRecentLog(value: unknown): value is RecentLog {
  if (typeof value !== 'object' || value === null) return false;
  const v = value as Record<string, unknown>;
  return Array.isArray(v.paths) && v.paths.length > 0 && v.paths.every((p) => typeof p === 'string') && typeof v.openedAt === 'string';
}
