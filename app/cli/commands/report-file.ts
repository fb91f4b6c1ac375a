import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { Report } from '../../core/model/report.ts';
import { parseStrictJson, StrictJsonError } from '../../report/strict-json.ts';
import { parseReport, ReportContractError } from '../../report/validate.ts';
import { UsageError } from '../errors.ts';

/**
 * Reads a report JSON file as plain data (signing and verifying work on what the file says), strictly:
 * a duplicate key or a number no float can hold is refused before any digest is computed.
 */
export function readReportFile(file: string, cwd: string): Record<string, unknown> {
  let text: string;
  try {
    text = readFileSync(path.resolve(cwd, file), 'utf8');
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new UsageError(code === 'ENOENT' ? `no such file: ${file}` : `cannot read ${file} (${code ?? 'error'})`);
  }
  let value: unknown;
  try {
    JSON.parse(text);
  } catch (error) {
    throw new UsageError(`${file} is not JSON: ${(error as Error).message}`);
  }
  try {
    value = parseStrictJson(text);
  } catch (error) {
    throw new UsageError(`${file}: ${error instanceof StrictJsonError ? error.message : String(error)}`);
  }
  if (value === null || typeof value !== 'object' || Array.isArray(value) || typeof (value as { schema?: unknown }).schema !== 'string' || !String((value as { schema: string }).schema).startsWith('counterweight.report/')) {
    throw new UsageError(`${file} is not a Counterweight report (no "schema": "counterweight.report/…" key)`);
  }
  return value as Record<string, unknown>;
}

/** Reads a report JSON file and validates it against the report contract (a usage error names what is wrong). */
export function readReport(file: string, cwd: string): Report {
  const value = readReportFile(file, cwd);
  try {
    return parseReport(value, file);
  } catch (error) {
    if (error instanceof ReportContractError) throw new UsageError(error.message);
    throw error;
  }
}

export function readTextFile(file: string, cwd: string, what: string): string {
  try {
    return readFileSync(path.resolve(cwd, file), 'utf8');
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new UsageError(code === 'ENOENT' ? `no such ${what}: ${file}` : `cannot read ${what} ${file} (${code ?? 'error'})`);
  }
}
