/** Entry of the `counterweight` command: dispatch, exit codes, and errors as one line (stack with --debug). */
import { readFileSync } from 'node:fs';
import { parseArgs, helpText, type CommandSpec, type ParsedArgs } from './args.ts';
import { EXIT, InterruptedError, isCancellation, isInputError, UsageError } from './errors.ts';
import type { CliIo } from './io.ts';
import { terminalText } from './terminal-text.ts';
import { auditSpec, runAuditCommand } from './commands/audit.ts';
import { compareSpec, runCompare } from './commands/compare.ts';
import { historySpec, runHistory } from './commands/history.ts';
import { inspectSpec, runInspect } from './commands/inspect.ts';
import { keygenSpec, runKeygen } from './commands/keygen.ts';
import { planSpec, runPlan } from './commands/plan.ts';
import { renderSpec, runRender } from './commands/render.ts';
import { rolesSpec, runRoles } from './commands/roles.ts';
import { runSchema, schemaSpec } from './commands/schema.ts';
import { runSign, signSpec } from './commands/sign.ts';
import { runVerify, verifySpec } from './commands/verify.ts';

interface Command {
  spec: CommandSpec;
  run(args: ParsedArgs, io: CliIo): number | Promise<number>;
}

const COMMANDS: Command[] = [
  { spec: auditSpec, run: runAuditCommand },
  { spec: compareSpec, run: runCompare },
  { spec: historySpec, run: runHistory },
  { spec: inspectSpec, run: runInspect },
  { spec: planSpec, run: runPlan },
  { spec: rolesSpec, run: runRoles },
  { spec: schemaSpec, run: (a, io) => runSchema(io, a) },
  { spec: signSpec, run: runSign },
  { spec: verifySpec, run: runVerify },
  { spec: keygenSpec, run: runKeygen },
  { spec: renderSpec, run: runRender },
];

function version(): string {
  const pkg = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string };
  return pkg.version;
}

function topHelp(): string {
  const width = Math.max(...COMMANDS.map((c) => c.spec.name.length)) + 2;
  return [
    'counterweight: audit decision logs of contextual bandits before off-policy evaluation.',
    '',
    'Usage: counterweight <command> [arguments] [options]',
    '',
    'Commands:',
    ...COMMANDS.map((c) => `  ${c.spec.name.padEnd(width)}${c.spec.summary.split('\n')[0]}`),
    '',
    'Run counterweight <command> --help for its options.',
    'Exit status: 0 supported, 1 supported with caveats (only with --fail-on warn), 2 not supported, verification failed or (compare) a regression, 3 usage or input error, 130 interrupted.',
    '',
  ].join('\n');
}

export async function main(argv: readonly string[], io: CliIo): Promise<number> {
  const debug = argv.includes('--debug');
  try {
    const [name, ...rest] = argv;
    if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
      io.stdout.write(topHelp());
      return name === undefined ? EXIT.usage : 0;
    }
    if (name === '--version' || name === '-v') {
      io.stdout.write(`${version()}\n`);
      return 0;
    }
    const command = COMMANDS.find((c) => c.spec.name === name);
    if (!command) throw new UsageError(`unknown command '${name}' (commands: ${COMMANDS.map((c) => c.spec.name).join(', ')})`);
    const args = parseArgs(command.spec, rest);
    if (args.flags.help === true) {
      io.stdout.write(helpText(command.spec));
      return 0;
    }
    return await command.run(args, io);
  } catch (error) {
    if (io.signal?.aborted && isCancellation(error)) {
      io.stderr.write(`counterweight: ${new InterruptedError().message}\n`);
      return EXIT.interrupted;
    }
    if (isInputError(error)) {
      // Messages quote column names, values and file names from the input: one line, no control characters.
      io.stderr.write(`counterweight: ${terminalText(error.message)}\n`);
      if (debug && error.stack) io.stderr.write(`${error.stack}\n`);
    } else {
      const message = error instanceof Error ? error.message : String(error);
      io.stderr.write(`counterweight: unexpected error: ${terminalText(message)}\n`);
      io.stderr.write(debug && error instanceof Error && error.stack ? `${error.stack}\n` : 'Run again with --debug for the stack trace.\n');
    }
    return EXIT.usage;
  }
}

/** Runs the command for this process and sets its exit code (bin/counterweight.mjs calls this). */
export async function runProcess(): Promise<void> {
  const controller = new AbortController();
  let interrupts = 0;
  // The first Ctrl-C cancels the running query and lets the command clean up; a second one quits at once.
  const interrupt = (): void => {
    interrupts++;
    if (interrupts > 1) process.exit(EXIT.interrupted);
    controller.abort();
  };
  process.on('SIGINT', interrupt);
  process.on('SIGTERM', interrupt);
  try {
    process.exitCode = await main(process.argv.slice(2), { stdout: process.stdout, stderr: process.stderr, env: process.env, cwd: process.cwd(), signal: controller.signal });
  } finally {
    process.off('SIGINT', interrupt);
    process.off('SIGTERM', interrupt);
  }
}
