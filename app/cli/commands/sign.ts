import type { Signoff } from '../../core/model/report.ts';
import { serializeReport } from '../../report/json.ts';
import { createSignoff, DECISIONS, type Decision } from '../../report/signoff.ts';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { stringFlag } from '../args.ts';
import { UsageError } from '../errors.ts';
import type { CliIo } from '../io.ts';
import { writeFile } from './audit.ts';
import { readReportFile, readTextFile } from './report-file.ts';

export const signSpec: CommandSpec = {
  name: 'sign',
  summary: "Record a reviewer's sign-off in a report: digest of the report, optionally an Ed25519 signature.\nThe sign-off is the reviewer's judgement, not the tool's.",
  positionals: { name: 'report.json', min: 1, max: 1 },
  flags: {
    reviewer: { kind: 'string', value: 'NAME', help: 'who signs (required)' },
    decision: { kind: 'string', value: DECISIONS.join('|'), choices: DECISIONS, help: 'the decision (required)' },
    note: { kind: 'string', value: 'TEXT', help: 'conditions or remarks' },
    key: { kind: 'string', value: 'FILE', help: 'PEM PKCS#8 Ed25519 private key (from counterweight keygen) to sign with' },
    out: { kind: 'string', value: 'FILE', help: 'write the signed report here instead of in place' },
    replace: { kind: 'boolean', help: 'replace an existing sign-off' },
  },
};

export function runSign(args: ParsedArgs, io: CliIo): number {
  const file = args.positionals[0] as string;
  const reviewer = stringFlag(args.flags, 'reviewer');
  const decision = stringFlag(args.flags, 'decision') as Decision | undefined;
  if (!reviewer || !reviewer.trim()) throw new UsageError("'sign' needs --reviewer NAME");
  if (!decision) throw new UsageError(`'sign' needs --decision ${DECISIONS.join('|')}`);
  const report = readReportFile(file, io.cwd);
  const existing = report.signoff as Signoff | null | undefined;
  if (existing && args.flags.replace !== true) throw new UsageError(`${file} is already signed by ${existing.reviewer} (${existing.decision}, ${existing.signed_at}); pass --replace to sign again`);
  const keyFile = stringFlag(args.flags, 'key');
  const privateKeyPem = keyFile ? readTextFile(keyFile, io.cwd, 'key file') : undefined;
  let signoff: Signoff;
  try {
    signoff = createSignoff(report, { reviewer: reviewer.trim(), decision, note: stringFlag(args.flags, 'note') ?? '', ...(privateKeyPem ? { privateKeyPem } : {}) });
  } catch (error) {
    throw new UsageError(`${keyFile ? `--key ${keyFile}: ` : ''}${(error as Error).message}`);
  }
  const out = stringFlag(args.flags, 'out') ?? file;
  writeFile(out, serializeReport({ ...report, signoff }), io.cwd);
  io.stdout.write(`Signed ${out}: ${signoff.decision} by ${signoff.reviewer} at ${signoff.signed_at}\ndigest ${signoff.digest}${signoff.signature ? `\nsignature ed25519, public key ${signoff.signature.public_key}` : '\n(no --key: digest only, no signature)'}\n`);
  return 0;
}
