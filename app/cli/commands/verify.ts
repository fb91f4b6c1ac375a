import { existsSync } from 'node:fs';
import path from 'node:path';
import type { InputFile } from '../../core/model/report.ts';
import { sha256File } from '../../report/fingerprint.ts';
import { checkSignoff, type SignoffProblem } from '../../report/signoff.ts';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { listFlag, stringFlag } from '../args.ts';
import { EXIT, UsageError } from '../errors.ts';
import type { CliIo } from '../io.ts';
import { readReportFile, readTextFile } from './report-file.ts';

export const verifySpec: CommandSpec = {
  name: 'verify',
  summary: 'Check a signed report: its digest, its signature, and that the input files still hash the same.\nExit status: 0 all good, 2 verification failed, 3 usage error.',
  positionals: { name: 'report.json', min: 1, max: 1 },
  flags: {
    'public-key': { kind: 'string', value: 'FILE', help: "the signer's SPKI PEM public key; the signature must be by this key" },
    source: { kind: 'list', value: 'FILE', help: 'where an input file lives now (matched to the report by path, then by file name)' },
  },
};

function describeProblem(p: SignoffProblem): string {
  switch (p.kind) {
    case 'unsigned': return 'the report has no sign-off (sign it with counterweight sign)';
    case 'malformed': return `the sign-off block is malformed: ${p.detail}`;
    case 'digest': return `digest mismatch: the report was changed after signing (signed ${p.expected}, now ${p.actual})`;
    case 'signature-missing': return 'the sign-off carries no signature, but --public-key asks for one';
    case 'signature-invalid': return 'signature does not verify: the sign-off block (reviewer, decision, note, time or digest) was changed or not signed by the embedded key';
    case 'public-key-mismatch': return `signed by another key than --public-key (embedded ${p.embedded}, expected ${p.given})`;
  }
}

interface FileCheck {
  readonly recorded: InputFile;
  readonly located: string | null;
}

function locateFiles(recorded: readonly InputFile[], sources: readonly string[], cwd: string, reportDir: string): FileCheck[] {
  return recorded.map((entry) => {
    if (sources.length > 0) {
      const byPath = sources.find((s) => path.resolve(cwd, s) === path.resolve(cwd, entry.path));
      const byName = sources.find((s) => path.basename(s) === path.basename(entry.path));
      const chosen = byPath ?? byName ?? (recorded.length === 1 && sources.length === 1 ? sources[0] : undefined);
      return { recorded: entry, located: chosen ? path.resolve(cwd, chosen) : null };
    }
    const candidates = [path.resolve(cwd, entry.path), path.resolve(reportDir, entry.path)];
    return { recorded: entry, located: candidates.find((c) => existsSync(c)) ?? null };
  });
}

export async function runVerify(args: ParsedArgs, io: CliIo): Promise<number> {
  const file = args.positionals[0] as string;
  const report = readReportFile(file, io.cwd);
  const keyFile = stringFlag(args.flags, 'public-key');
  const publicKeyPem = keyFile ? readTextFile(keyFile, io.cwd, 'public key file') : undefined;
  let problems: SignoffProblem[];
  try {
    problems = checkSignoff(report, publicKeyPem ? { publicKeyPem } : {});
  } catch (error) {
    throw new UsageError(`--public-key ${keyFile}: ${(error as Error).message}`);
  }
  const lines: string[] = [];
  let failed = problems.length > 0;
  for (const p of problems) lines.push(`FAIL  ${describeProblem(p)}`);
  if (problems.every((p) => p.kind !== 'digest' && p.kind !== 'unsigned' && p.kind !== 'malformed')) lines.push('ok    digest matches the report');
  const signoff = report.signoff as { signature?: unknown } | null | undefined;
  if (signoff?.signature && problems.every((p) => p.kind !== 'signature-invalid' && p.kind !== 'malformed')) lines.push(`ok    ed25519 signature verifies${publicKeyPem && problems.every((p) => p.kind !== 'public-key-mismatch') ? ` with ${keyFile}` : ' with the embedded public key'}`);

  const input = report.input as { files?: InputFile[] } | undefined;
  const recorded = Array.isArray(input?.files) ? input.files : [];
  const sources = listFlag(args.flags, 'source');
  for (const s of sources) if (!existsSync(path.resolve(io.cwd, s))) throw new UsageError(`--source ${s}: no such file`);
  for (const check of locateFiles(recorded, sources, io.cwd, path.dirname(path.resolve(io.cwd, file)))) {
    const { recorded: entry, located } = check;
    if (located === null) {
      failed = true;
      lines.push(`FAIL  input file ${entry.path}: not found${sources.length ? ' among --source files' : ' at its recorded path; point at it with --source FILE'}`);
      continue;
    }
    const actual = await sha256File(located);
    if (actual !== entry.sha256) {
      failed = true;
      lines.push(`FAIL  input file ${entry.path} changed: expected sha256 ${entry.sha256}, actual ${actual} (${path.relative(io.cwd, located) || located})`);
    } else {
      lines.push(`ok    input file ${entry.path} hashes the same (${entry.sha256.slice(0, 16)}…)`);
    }
  }
  lines.push(failed ? 'Verification FAILED.' : 'Verified.');
  io.stdout.write(`${lines.join('\n')}\n`);
  return failed ? EXIT.verifyFailed : 0;
}
