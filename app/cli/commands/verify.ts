import { existsSync } from 'node:fs';
import path from 'node:path';
import type { InputFile, Report } from '../../core/model/report.ts';
import { sha256File } from '../../report/fingerprint.ts';
import { checkSignoff, loadPublicKey, publicKeyBase64, type SignoffProblem } from '../../report/signoff.ts';
import { keyFingerprint, parseTrustedKeys, TrustedKeysError, type TrustedKey } from '../../report/trusted-keys.ts';
import { terminalText as t_ } from '../terminal-text.ts';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { listFlag, stringFlag } from '../args.ts';
import { EXIT, UsageError } from '../errors.ts';
import type { CliIo } from '../io.ts';
import { readReportFile, readTextFile } from './report-file.ts';
import { reaudit } from '../reaudit.ts';

export const verifySpec: CommandSpec = {
  name: 'verify',
  summary: 'Check a signed report: its digest, its signature, who signed it, and that the input files still hash the same.\n'
    + 'A signature is authenticated only by a key you trust (--public-key or --trusted-keys); a signature by the key\n'
    + 'embedded in the report alone, or a digest without a signature, is reported and does not verify.\n'
    + 'Exit status: 0 verified, 2 verification failed or signer not authenticated, 3 usage error.',
  positionals: { name: 'report.json', min: 1, max: 1 },
  flags: {
    'public-key': { kind: 'string', value: 'FILE', help: "the signer's SPKI PEM public key; the signature must be by this key" },
    'trusted-keys': { kind: 'string', value: 'FILE', help: 'reviewers\' public keys, one "<key> <reviewer name>" per line (keygen prints the line); names the signer or says the key is unknown' },
    source: { kind: 'list', value: 'FILE', help: 'where an input file lives now (matched to the report by path, then by file name)' },
    reaudit: { kind: 'boolean', help: 'also run the recorded audit again on the input files and check that the report body is the same' },
  },
};

function describeProblem(p: SignoffProblem): string {
  switch (p.kind) {
    case 'unsigned': return 'the report has no sign-off (sign it with counterweight sign)';
    case 'malformed': return `the sign-off block is malformed: ${p.detail}`;
    case 'digest': return `digest mismatch: the report was changed after signing (signed ${p.expected}, now ${p.actual})`;
    case 'signature-missing': return 'the sign-off carries no signature, but a trusted key is asked for';
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

interface Trust {
  /** Lines to print about who signed. */
  readonly lines: string[];
  readonly authenticated: boolean;
}

/** Who signed, as far as a key the user trusts says; the key embedded in the report proves nothing alone. */
function signerTrust(report: Record<string, unknown>, problems: readonly SignoffProblem[], given: { file: string; key: string } | null, trusted: { file: string; keys: TrustedKey[] } | null): Trust {
  const signoff = report.signoff as { reviewer?: unknown; signature?: { public_key?: unknown } } | null | undefined;
  if (!signoff || problems.some((p) => p.kind === 'unsigned' || p.kind === 'malformed')) return { lines: [], authenticated: false };
  const reviewer = t_(typeof signoff.reviewer === 'string' ? signoff.reviewer : '(no name)');
  const embedded = typeof signoff.signature?.public_key === 'string' ? signoff.signature.public_key : null;
  if (embedded === null) {
    return { lines: ['FAIL  not signed: the sign-off has a digest and no signature, which is a checksum anyone can recompute; it does not say who signed'], authenticated: false };
  }
  if (problems.some((p) => p.kind === 'signature-invalid')) return { lines: [], authenticated: false };
  const fingerprint = keyFingerprint(embedded);
  if (given) {
    if (given.key !== embedded) return { lines: [], authenticated: false };
    return { lines: [`ok    signed by the key in ${t_(given.file)} (${fingerprint}); the sign-off names ${reviewer}`], authenticated: true };
  }
  if (trusted) {
    const known = trusted.keys.find((k) => k.publicKey === embedded || k.fingerprint === fingerprint);
    if (!known) return { lines: [`FAIL  signed by an unknown key ${fingerprint}: it is not in ${t_(trusted.file)} (the sign-off claims ${reviewer})`], authenticated: false };
    if (known.reviewer !== signoff.reviewer) {
      return { lines: [`FAIL  signed by ${t_(known.reviewer)}'s key (${fingerprint}, ${t_(trusted.file)} line ${known.line}), but the sign-off names ${reviewer}`], authenticated: false };
    }
    return { lines: [`ok    signed by ${t_(known.reviewer)} (${fingerprint}, ${t_(trusted.file)} line ${known.line})`], authenticated: true };
  }
  return {
    lines: [`FAIL  signer not authenticated: the signature is by the key embedded in the report (${fingerprint}), which anyone re-signing the report could have put there; the sign-off claims ${reviewer}. Pass --trusted-keys FILE or --public-key FILE to check who signed`],
    authenticated: false,
  };
}

export async function runVerify(args: ParsedArgs, io: CliIo): Promise<number> {
  const file = args.positionals[0] as string;
  const keyFile = stringFlag(args.flags, 'public-key');
  const trustedFile = stringFlag(args.flags, 'trusted-keys');
  if (keyFile && trustedFile) throw new UsageError('pass --public-key or --trusted-keys, not both');
  const publicKeyPem = keyFile ? readTextFile(keyFile, io.cwd, 'public key file') : undefined;
  let given: { file: string; key: string } | null = null;
  if (keyFile && publicKeyPem !== undefined) {
    try {
      given = { file: keyFile, key: publicKeyBase64(loadPublicKey(publicKeyPem)) };
    } catch (error) {
      throw new UsageError(`--public-key ${keyFile}: ${(error as Error).message}`);
    }
  }
  let trusted: { file: string; keys: TrustedKey[] } | null = null;
  if (trustedFile) {
    try {
      trusted = { file: trustedFile, keys: parseTrustedKeys(readTextFile(trustedFile, io.cwd, 'trusted-keys file'), trustedFile) };
    } catch (error) {
      if (error instanceof TrustedKeysError) throw new UsageError(error.message);
      throw error;
    }
  }
  const report = readReportFile(file, io.cwd);
  const problems = checkSignoff(report, publicKeyPem ? { publicKeyPem } : {});
  const lines: string[] = [];
  let failed = problems.length > 0;
  for (const p of problems) lines.push(`FAIL  ${t_(describeProblem(p))}`);
  const signoff = report.signoff as { signature?: unknown } | null | undefined;
  if (problems.every((p) => p.kind !== 'digest' && p.kind !== 'unsigned' && p.kind !== 'malformed')) {
    lines.push(signoff?.signature ? 'ok    digest matches the report' : 'ok    digest matches the report (a checksum of its contents)');
  }
  if (signoff?.signature && problems.every((p) => p.kind !== 'signature-invalid' && p.kind !== 'malformed')) lines.push('ok    ed25519 signature verifies over the sign-off block');
  const trust = signerTrust(report, problems, given, trusted);
  lines.push(...trust.lines);
  if (!trust.authenticated) failed = true;

  const input = report.input as { files?: InputFile[] } | undefined;
  const recorded = Array.isArray(input?.files) ? input.files : [];
  const sources = listFlag(args.flags, 'source');
  for (const s of sources) if (!existsSync(path.resolve(io.cwd, s))) throw new UsageError(`--source ${s}: no such file`);
  const present: string[] = [];
  for (const check of locateFiles(recorded, sources, io.cwd, path.dirname(path.resolve(io.cwd, file)))) {
    const { recorded: entry, located } = check;
    if (located === null) {
      failed = true;
      lines.push(`FAIL  input file ${t_(entry.path)}: not found${sources.length ? ' among --source files' : ' at its recorded path; point at it with --source FILE'}`);
      continue;
    }
    const actual = await sha256File(located);
    if (actual !== entry.sha256) {
      failed = true;
      lines.push(`FAIL  input file ${t_(entry.path)} changed: expected sha256 ${t_(entry.sha256)}, actual ${actual} (${t_(path.relative(io.cwd, located) || located)})`);
    } else {
      lines.push(`ok    input file ${t_(entry.path)} hashes the same (${t_(entry.sha256.slice(0, 16))}…)`);
      present.push(located);
    }
  }
  if (args.flags.reaudit === true) {
    const outcome = present.length === recorded.length && recorded.length > 0 ? await reaudit(report as unknown as Report, present, io.cwd, path.dirname(path.resolve(io.cwd, file))) : { same: false, lines: ['FAIL  re-audit: needs every input file, unchanged'] };
    lines.push(...outcome.lines);
    failed ||= !outcome.same;
  }
  lines.push(failed ? (problems.length === 0 && lines.every((l) => !l.startsWith('FAIL  input') && !l.startsWith('FAIL  re-audit')) && !trust.authenticated ? 'Not verified: who signed is not established.' : 'Verification FAILED.') : 'Verified.');
  io.stdout.write(`${lines.join('\n')}\n`);
  return failed ? EXIT.verifyFailed : 0;
}
