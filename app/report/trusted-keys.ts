/**
 * Who may sign: a trusted-keys file, one reviewer per line, `<public key> <reviewer name>`, the key being
 * the SPKI DER in base64 exactly as a sign-off's `public_key` holds it (and as `counterweight keygen`
 * prints it); blank lines and lines starting with # are ignored. A key is known by its fingerprint:
 * "SHA256:" and the unpadded base64 of the SHA-256 of its DER bytes (the convention OpenSSH prints).
 */
import { createHash, createPublicKey } from 'node:crypto';

export interface TrustedKey {
  readonly reviewer: string;
  readonly publicKey: string;
  readonly fingerprint: string;
  readonly line: number;
}

export function keyFingerprint(publicKeyBase64: string): string {
  return `SHA256:${createHash('sha256').update(Buffer.from(publicKeyBase64, 'base64')).digest('base64').replace(/=+$/, '')}`;
}

export class TrustedKeysError extends Error {
  override readonly name = 'TrustedKeysError';
}

export function parseTrustedKeys(text: string, file: string): TrustedKey[] {
  const keys: TrustedKey[] = [];
  text.split(/\r?\n/).forEach((raw, i) => {
    const line = raw.trim();
    if (line === '' || line.startsWith('#')) return;
    const match = /^(\S+)\s+(.+)$/.exec(line);
    if (!match) throw new TrustedKeysError(`${file} line ${i + 1}: expected "<public key> <reviewer name>"`);
    const [, publicKey, reviewer] = match as unknown as [string, string, string];
    let type: string | undefined;
    try {
      type = createPublicKey({ key: Buffer.from(publicKey, 'base64'), format: 'der', type: 'spki' }).asymmetricKeyType;
    } catch {
      throw new TrustedKeysError(`${file} line ${i + 1}: "${publicKey.slice(0, 24)}…" is not a public key (SPKI DER in base64)`);
    }
    if (type !== 'ed25519') throw new TrustedKeysError(`${file} line ${i + 1}: the key is ${type ?? 'unknown'}, not ed25519`);
    const fingerprint = keyFingerprint(publicKey);
    const twice = keys.find((k) => k.fingerprint === fingerprint && k.reviewer !== reviewer.trim());
    if (twice) throw new TrustedKeysError(`${file} line ${i + 1}: this key is already listed for ${twice.reviewer} (line ${twice.line}); one key belongs to one reviewer`);
    keys.push({ reviewer: reviewer.trim(), publicKey, fingerprint, line: i + 1 });
  });
  if (keys.length === 0) throw new TrustedKeysError(`${file} lists no key`);
  return keys;
}
