/** The command as a user runs it: `node bin/counterweight.mjs ...` in a child process, with colour off. */
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { expect } from 'vitest';

const BIN = path.resolve('bin/counterweight.mjs');

export interface CliRun {
  readonly code: number | null;
  readonly stdout: string;
  readonly stderr: string;
}

export function runCli(args: readonly string[], cwd: string, timeoutMs: number): CliRun {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd, encoding: 'utf8', env: { ...process.env, NO_COLOR: '1' }, timeout: timeoutMs });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** Each usage or input error exits 3 with its specific message and no stack trace. */
export function expectInputErrors(cli: (args: string[]) => CliRun, cases: readonly (readonly [readonly string[], string])[]): void {
  for (const [args, message] of cases) {
    const r = cli([...args]);
    expect(r.code, args.join(' ')).toBe(3);
    expect(r.stderr).toContain(message);
    expect(r.stderr).not.toMatch(/\n\s+at /);
  }
}
