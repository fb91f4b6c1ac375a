/**
 * Digest and Ed25519 signature of a report's sign-off.
 *
 * digest    = SHA-256, lowercase hex, of the canonical JSON (canonical-json.ts, RFC 8785) of the report
 *             with its `signoff` key removed. It pins every number, finding and input hash in the report.
 * signature = Ed25519 (RFC 8032, via node:crypto) over the UTF-8 bytes of the canonical JSON of the sign-off
 *             block without its `signature` field: {decision, digest, note, reviewer, signed_at}. Signing the
 *             block rather than the digest alone also binds the reviewer, the decision and the note, which
 *             the digest does not cover; the digest is inside it, so the report is covered too.
 * public_key in the block is the signer's SPKI DER in base64; value is the 64-byte signature in base64.
 */
import { createHash, createPrivateKey, createPublicKey, generateKeyPairSync, sign, verify, type KeyObject } from 'node:crypto';
import type { Signoff } from '../core/model/report.ts';
import { canonicalJson } from './canonical-json.ts';

export type Decision = Signoff['decision'];
export const DECISIONS: readonly Decision[] = ['approve', 'approve-with-conditions', 'reject'];

type JsonObject = Record<string, unknown>;

export function sha256Hex(data: string | Uint8Array): string {
  return createHash('sha256').update(data).digest('hex');
}

function withoutSignoff(report: JsonObject): JsonObject {
  const { signoff: _signoff, ...rest } = report;
  return rest;
}

export function reportDigest(report: JsonObject): string {
  return sha256Hex(canonicalJson(withoutSignoff(report)));
}

function signedMessage(block: Omit<Signoff, 'signature'>): Buffer {
  const { reviewer, decision, note, signed_at, digest } = block;
  return Buffer.from(canonicalJson({ reviewer, decision, note, signed_at, digest }), 'utf8');
}

export interface SignRequest {
  reviewer: string;
  decision: Decision;
  note?: string;
  /** PEM PKCS#8 Ed25519 private key. */
  privateKeyPem?: string;
  now?: Date;
}

export function createSignoff(report: JsonObject, request: SignRequest): Signoff {
  const block = {
    reviewer: request.reviewer,
    decision: request.decision,
    note: request.note ?? '',
    signed_at: (request.now ?? new Date()).toISOString(),
    digest: reportDigest(report),
  };
  if (request.privateKeyPem === undefined) return block;
  const privateKey = loadPrivateKey(request.privateKeyPem);
  const publicKey = createPublicKey(privateKey);
  return {
    ...block,
    signature: {
      algorithm: 'ed25519',
      public_key: publicKeyBase64(publicKey),
      value: sign(null, signedMessage(block), privateKey).toString('base64'),
    },
  };
}

function loadEd25519(pem: string, kind: 'private' | 'public'): KeyObject {
  let key: KeyObject;
  try {
    key = (kind === 'private' ? createPrivateKey : createPublicKey)({ key: pem, format: 'pem' });
  } catch (error) {
    throw new Error(`not a PEM ${kind} key (${(error as Error).message})`);
  }
  if (key.asymmetricKeyType !== 'ed25519') throw new Error(`the key is ${key.asymmetricKeyType ?? 'not asymmetric'}, not ed25519`);
  return key;
}

function loadPrivateKey(pem: string): KeyObject {
  return loadEd25519(pem, 'private');
}

export function loadPublicKey(pem: string): KeyObject {
  return loadEd25519(pem, 'public');
}

export function publicKeyBase64(key: KeyObject): string {
  return key.export({ format: 'der', type: 'spki' }).toString('base64');
}

export function generateSigningKeys(): { privateKeyPem: string; publicKeyPem: string } {
  const { privateKey, publicKey } = generateKeyPairSync('ed25519');
  return {
    privateKeyPem: privateKey.export({ format: 'pem', type: 'pkcs8' }).toString(),
    publicKeyPem: publicKey.export({ format: 'pem', type: 'spki' }).toString(),
  };
}

export type SignoffProblem =
  | { kind: 'unsigned' }
  | { kind: 'malformed'; detail: string }
  | { kind: 'digest'; expected: string; actual: string }
  | { kind: 'signature-missing' }
  | { kind: 'signature-invalid' }
  | { kind: 'public-key-mismatch'; embedded: string; given: string };

/** Checks the digest against the report body and the signature against the block; empty when all hold. */
export function checkSignoff(report: JsonObject, options: { publicKeyPem?: string } = {}): SignoffProblem[] {
  const block = report.signoff as Signoff | null | undefined;
  if (block === null || block === undefined) return [{ kind: 'unsigned' }];
  if (typeof block !== 'object' || typeof block.digest !== 'string') return [{ kind: 'malformed', detail: 'signoff has no digest' }];
  const problems: SignoffProblem[] = [];
  const actual = reportDigest(report);
  if (actual !== block.digest) problems.push({ kind: 'digest', expected: block.digest, actual });
  const signature = block.signature;
  if (signature === undefined) {
    if (options.publicKeyPem !== undefined) problems.push({ kind: 'signature-missing' });
    return problems;
  }
  if (signature.algorithm !== 'ed25519' || typeof signature.public_key !== 'string' || typeof signature.value !== 'string') {
    problems.push({ kind: 'malformed', detail: 'signature block needs algorithm "ed25519", public_key and value' });
    return problems;
  }
  let embedded: KeyObject;
  try {
    embedded = createPublicKey({ key: Buffer.from(signature.public_key, 'base64'), format: 'der', type: 'spki' });
  } catch {
    problems.push({ kind: 'malformed', detail: 'embedded public key is not SPKI DER in base64' });
    return problems;
  }
  if (!verify(null, signedMessage(block), embedded, Buffer.from(signature.value, 'base64'))) problems.push({ kind: 'signature-invalid' });
  if (options.publicKeyPem !== undefined) {
    const given = publicKeyBase64(loadPublicKey(options.publicKeyPem));
    if (given !== signature.public_key) problems.push({ kind: 'public-key-mismatch', embedded: signature.public_key, given });
  }
  return problems;
}
