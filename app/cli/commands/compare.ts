import path from 'node:path';
import { anyChange, compareReports } from '../../core/compare/compare.ts';
import type { Comparison } from '../../core/compare/contract.ts';
import type { Report } from '../../core/model/report.ts';
import { serializeComparison } from '../../report/comparison-json.ts';
import type { CommandSpec, FlagSpec, ParsedArgs } from '../args.ts';
import { stringFlag } from '../args.ts';
import { formatComparisonSummary } from '../compare-summary.ts';
import { documentFlags, writeDocument } from '../document-output.ts';
import { EXIT, UsageError } from '../errors.ts';
import { useColour, type CliIo } from '../io.ts';
import { painter } from '../summary.ts';
import { readReport } from './report-file.ts';

export const FAIL_ON_CHANGE: FlagSpec = {
  kind: 'string', value: 'regression|any-change', choices: ['regression', 'any-change'],
  help: "exit 2 on a regression (default: a worse verdict, a check or segment that got worse, a new or worsened failing finding) or on any change at all",
};

export const compareSpec: CommandSpec = {
  name: 'compare',
  summary: 'Compare a report with a baseline report: what got worse, what is new or resolved, whether estimates moved.\nExit status: 0 no regression, 2 a regression (or any change with --fail-on any-change), 3 usage or input error.',
  positionals: { name: 'baseline.json new.json', min: 2, max: 2 },
  flags: {
    ...documentFlags('comparison', 'counterweight.comparison/1'),
    'fail-on': FAIL_ON_CHANGE,
    quiet: { kind: 'boolean', help: 'no summary' },
  },
};

export interface ComparisonOutputs {
  readonly json?: string | undefined;
  readonly html?: string | undefined;
  readonly failOn: 'regression' | 'any-change';
  readonly quiet: boolean;
  /** Print the summary on stderr (stdout carries JSON). */
  readonly summaryOnStderr?: boolean;
}

function comparisonExitCode(c: Comparison, failOn: 'regression' | 'any-change'): number {
  const failed = failOn === 'any-change' ? anyChange(c) : c.regression;
  return failed ? EXIT.notSupported : EXIT.supported;
}

function outputsFrom(flags: ParsedArgs['flags'], names: { json: string; html: string }): ComparisonOutputs {
  return {
    json: stringFlag(flags, names.json),
    html: stringFlag(flags, names.html),
    failOn: (stringFlag(flags, 'fail-on') === 'any-change' ? 'any-change' : 'regression'),
    quiet: flags.quiet === true,
  };
}

/** Compares, writes what was asked for, prints the summary (leading with what got worse) and returns the exit status. */
export async function emitComparison(baseline: Report, current: Report, labels: { baseline: string; current: string }, outputs: ComparisonOutputs, io: CliIo): Promise<number> {
  const comparison = compareReports(baseline, current);
  await writeDocument(io, outputs, () => serializeComparison(comparison), async () => (await import('../../report/comparison-html.ts')).renderComparisonHtml(comparison, labels));
  if (!outputs.quiet) {
    const stream = outputs.json === '-' || outputs.summaryOnStderr ? io.stderr : io.stdout;
    stream.write(formatComparisonSummary(comparison, painter(useColour(stream, io.env)), labels));
    const written = [outputs.json && outputs.json !== '-' ? `JSON comparison: ${outputs.json}` : '', outputs.html ? `HTML comparison: ${outputs.html}` : ''].filter(Boolean);
    if (written.length) stream.write(`${written.join('\n')}\n`);
  }
  return comparisonExitCode(comparison, outputs.failOn);
}

export async function runCompare(args: ParsedArgs, io: CliIo): Promise<number> {
  const [baselineFile, currentFile] = args.positionals as [string, string];
  const outputs = outputsFrom(args.flags, { json: 'json', html: 'html' });
  for (const out of [outputs.json, outputs.html]) {
    if (out && out !== '-' && [baselineFile, currentFile].some((f) => path.resolve(io.cwd, f) === path.resolve(io.cwd, out))) {
      throw new UsageError(`refusing to write the comparison over the input report ${out}`);
    }
  }
  const baseline = readReport(baselineFile, io.cwd);
  const current = readReport(currentFile, io.cwd);
  return emitComparison(baseline, current, { baseline: baselineFile, current: currentFile }, outputs, io);
}
