import { displayPath } from '../../report/fingerprint.ts';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { useColour, type CliIo } from '../io.ts';
import { countRows, describeColumns, logCommand, withSources } from '../sources.ts';
import { formatSourceHeader, painter } from '../summary.ts';

export const inspectSpec: CommandSpec = logCommand('inspect', 'Print the row count and the columns (names and types) of a log.');

export async function runInspect(args: ParsedArgs, io: CliIo): Promise<number> {
  return withSources(args.flags, args.positionals, io.cwd, async (engine, source) => {
    const columns = await describeColumns(engine, source.relation);
    const rows = await countRows(engine, source.relation);
    io.stdout.write(formatSourceHeader(source.files.map((f) => displayPath(f, io.cwd)), source.format, rows, columns, painter(useColour(io.stdout, io.env))));
    return 0;
  });
}
