import { readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { buildHistory, type History, type LabelledReport } from '../../core/compare/history.ts';
import { serializeHistory } from '../../report/history-json.ts';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { stringFlag } from '../args.ts';
import { plain } from '../compare-summary.ts';
import { documentFlags, writeDocument } from '../document-output.ts';
import { UsageError } from '../errors.ts';
import type { CliIo } from '../io.ts';
import { readReport } from './report-file.ts';
import { counted } from '../../core/count-words.ts';

export const historySpec: CommandSpec = {
  name: 'history',
  summary: 'Read a folder of report JSON files as a history: verdict, checks, targets and segments over time, and when each finding first appeared.',
  positionals: { name: 'folder', min: 1, max: 1 },
  flags: documentFlags('history', 'counterweight.history/1'),
};

/** Every *.json file in the folder that is a Counterweight report; anything else is named and skipped. */
function readReportFolder(folder: string, cwd: string, warn: (line: string) => void): LabelledReport[] {
  const dir = path.resolve(cwd, folder);
  let names: string[];
  try {
    if (!statSync(dir).isDirectory()) throw new UsageError(`${folder} is not a folder`);
    names = readdirSync(dir).filter((n) => n.toLowerCase().endsWith('.json')).sort();
  } catch (error) {
    if (error instanceof UsageError) throw error;
    throw new UsageError(`no such folder: ${folder}`);
  }
  const out: LabelledReport[] = [];
  for (const name of names) {
    try {
      out.push({ label: name, report: readReport(path.join(dir, name), cwd) });
    } catch (error) {
      warn(`skipped ${name}: ${(error as Error).message}`);
    }
  }
  if (out.length === 0) throw new UsageError(`${folder} holds no Counterweight report JSON files`);
  return out;
}

function summary(h: History): string {
  const lines = [`${h.entries.length} report${h.entries.length === 1 ? '' : 's'}, oldest log first:`];
  for (const e of h.entries) lines.push(`  ${plain(e.label)}  ${e.span ? `${e.span.from.slice(0, 10)} – ${e.span.to.slice(0, 10)}` : e.started_at}  ${counted(e.rows, 'row')}  ${e.verdict}`);
  const latest = h.entries.length - 1;
  const fresh = h.findings.filter((f) => f.first === latest && latest > 0 && f.seen[latest] !== 'pass');
  lines.push(`Findings first seen in the latest report: ${fresh.length}`);
  for (const f of fresh.slice(0, 20)) lines.push(`  ${f.seen[latest]} ${f.check} ${plain(Object.entries(f.segment).map(([k, v]) => `${k}=${v}`).join(', ') || 'all rows')}${f.action ? ` ${plain(f.action)}` : ''}`);
  if (fresh.length > 20) lines.push(`  … and ${fresh.length - 20} more`);
  return `${lines.join('\n')}\n`;
}

export async function runHistory(args: ParsedArgs, io: CliIo): Promise<number> {
  const reports = readReportFolder(args.positionals[0] as string, io.cwd, (line) => io.stderr.write(`counterweight: ${line}\n`));
  const history = buildHistory(reports);
  const json = stringFlag(args.flags, 'json');
  await writeDocument(io, { json, html: stringFlag(args.flags, 'html') }, () => serializeHistory(history), async () => (await import('../../report/history-html.ts')).renderHistoryHtml(history));
  (json === '-' ? io.stderr : io.stdout).write(summary(history));
  return 0;
}
