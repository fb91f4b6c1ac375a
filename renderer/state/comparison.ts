/** The baseline a comparison starts from: a report file the user picked, or a stored recent audit; both validated. */
import { compareReports } from '../../app/core/compare/compare.ts';
import type { Comparison } from '../../app/core/compare/contract.ts';
import type { Report } from '../../app/core/model/report.ts';
import { parseReport } from '../../app/report/validate.ts';

export interface Baseline {
  readonly label: string;
  readonly report: Report;
}

/** A report file's text, validated; throws an Error whose message names the file and what is wrong. */
export function reportOfText(name: string, text: string): Baseline {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (error) {
    throw new Error(`${name} is not JSON: ${(error as Error).message}`);
  }
  return { label: name, report: parseReport(value, name) };
}

/** Reads a picked report JSON file; throws an Error whose message names what is wrong. */
export async function readBaselineFile(file: File): Promise<Baseline> {
  return reportOfText(file.name, await file.text());
}

/** The comparison the screen renders (the same function the headless `compare` command runs). */
export function comparisonOf(baseline: Baseline, current: Report): Comparison {
  return compareReports(baseline.report, current);
}
