import type { CommandSpec, ParsedArgs } from '../args.ts';
import { stringFlag } from '../args.ts';
import { UsageError } from '../errors.ts';
import type { CliIo } from '../io.ts';
import { writeFile } from './audit.ts';
import { readReport } from './report-file.ts';

export const renderSpec: CommandSpec = {
  name: 'render',
  summary: 'Write the HTML report of an existing report JSON (for example after signing it).',
  positionals: { name: 'report.json', min: 1, max: 1 },
  flags: { html: { kind: 'string', value: 'FILE', help: 'where to write the HTML report (required)' } },
};

export async function runRender(args: ParsedArgs, io: CliIo): Promise<number> {
  const out = stringFlag(args.flags, 'html');
  if (!out) throw new UsageError("'render' needs --html FILE");
  const report = readReport(args.positionals[0] as string, io.cwd);
  const { renderHtmlReport } = await import('../../report/html.ts');
  writeFile(out, renderHtmlReport(report), io.cwd);
  io.stdout.write(`HTML report: ${out}\n`);
  return 0;
}
