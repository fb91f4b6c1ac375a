import type { CommandSpec, ParsedArgs } from '../args.ts';
import type { CliIo } from '../io.ts';
import { logCommand, withSources } from '../sources.ts';
import { terminalText } from '../terminal-text.ts';
import { loadAuditCore } from './core.ts';

export const rolesSpec: CommandSpec = logCommand('roles', 'Suggest column roles for a log, with the reason for each (confirm or override them with audit --role).');

export async function runRoles(args: ParsedArgs, io: CliIo): Promise<number> {
  const core = await loadAuditCore();
  return withSources(args.flags, args.positionals, io.cwd, async (engine, source) => {
    const suggestions = await core.suggestRoles((sql) => engine.query(sql), source.relation);
    if (suggestions.length === 0) {
      io.stdout.write('No roles could be suggested; map them with audit --role NAME=COLUMN.\n');
      return 0;
    }
    const roleWidth = Math.max(...suggestions.map((s) => s.role.length));
    const colWidth = Math.max(...suggestions.map((s) => terminalText(s.column).length));
    for (const s of suggestions) {
      const confidence = typeof s.confidence === 'number' ? s.confidence.toFixed(2) : s.confidence;
      io.stdout.write(`${s.role.padEnd(roleWidth)}  ${terminalText(s.column).padEnd(colWidth)}  ${confidence}  ${terminalText(s.reason)}\n`);
    }
    io.stdout.write(`\nOverride with: counterweight audit ${terminalText(args.positionals.join(' '))} --role NAME=COLUMN\n`);
    return 0;
  });
}
