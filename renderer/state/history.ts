/**
 * The reports an audit history is read from: report files the user picked or dropped (each validated), and
 * audits kept in this browser. The history itself is the core's, the same function `counterweight history` runs.
 */
import { buildHistory, type History, type LabelledReport } from '../../app/core/compare/history.ts';
import { reportOfText } from './comparison.ts';

export interface ReadReports {
  readonly reports: readonly LabelledReport[];
  /** One line per file that is not a readable report, naming it. */
  readonly problems: readonly string[];
}

/** Reads and validates every file; a bad file is named and left out, the others are kept. */
export async function readReportFiles(files: readonly { readonly name: string; text(): Promise<string> }[]): Promise<ReadReports> {
  return reportsOfTexts(await Promise.all(files.map(async (f) => ({ name: f.name, text: await f.text() }))));
}

export function reportsOfTexts(files: readonly { readonly name: string; readonly text: string }[]): ReadReports {
  const reports: LabelledReport[] = [];
  const problems: string[] = [];
  for (const f of files) {
    try {
      reports.push(reportOfText(f.name, f.text));
    } catch (error) {
      problems.push((error as Error).message);
    }
  }
  return { reports, problems };
}

/** Adds reports to the list; a report with a label already in it replaces that one (picking a file again). */
export function withReports(list: readonly LabelledReport[], added: readonly LabelledReport[]): LabelledReport[] {
  const labels = new Set(added.map((r) => r.label));
  return [...list.filter((r) => !labels.has(r.label)), ...added];
}

export function historyOf(reports: readonly LabelledReport[]): History | null {
  return reports.length === 0 ? null : buildHistory(reports);
}
