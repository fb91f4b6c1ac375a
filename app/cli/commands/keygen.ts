import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { generateSigningKeys, loadPublicKey, publicKeyBase64 } from '../../report/signoff.ts';
import { keyFingerprint } from '../../report/trusted-keys.ts';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { stringFlag } from '../args.ts';
import { UsageError } from '../errors.ts';
import type { CliIo } from '../io.ts';

export const keygenSpec: CommandSpec = {
  name: 'keygen',
  summary: 'Create an Ed25519 signing key pair: PREFIX.key (private, PKCS#8 PEM, mode 0600) and PREFIX.pub (SPKI PEM).',
  positionals: { name: '', min: 0, max: 0 },
  flags: { out: { kind: 'string', value: 'PREFIX', help: 'file name prefix (default: counterweight-signing)' } },
};

export function runKeygen(args: ParsedArgs, io: CliIo): number {
  const prefix = stringFlag(args.flags, 'out') ?? 'counterweight-signing';
  const keyFile = `${prefix}.key`;
  const pubFile = `${prefix}.pub`;
  const { privateKeyPem, publicKeyPem } = generateSigningKeys();
  write(keyFile, privateKeyPem, 0o600, io.cwd);
  write(pubFile, publicKeyPem, 0o644, io.cwd);
  const spki = publicKeyBase64(loadPublicKey(publicKeyPem));
  io.stdout.write(`Private key: ${keyFile} (keep it secret; mode 0600)\nPublic key:  ${pubFile} (share it with whoever verifies)\n`
    + `Fingerprint: ${keyFingerprint(spki)}\nTrusted-keys line (verify --trusted-keys FILE; put the reviewer's name after the key):\n${spki} REVIEWER NAME\n`);
  return 0;
}

function write(file: string, text: string, mode: number, cwd: string): void {
  try {
    writeFileSync(path.resolve(cwd, file), text, { mode, flag: 'wx' });
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new UsageError(code === 'EEXIST' ? `${file} already exists; choose another --out PREFIX (keys are never overwritten)` : `cannot write ${file} (${code ?? 'error'})`);
  }
}
