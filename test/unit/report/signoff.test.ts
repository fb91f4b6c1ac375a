import { createHash, createPrivateKey, createPublicKey, sign as edSign, verify as edVerify } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { canonicalJson } from '../../../app/report/canonical-json.ts';
import { checkSignoff, createSignoff, generateSigningKeys, reportDigest } from '../../../app/report/signoff.ts';
import { toJsonValue } from '../../../app/report/json.ts';
import { fixtureReport } from './fixture-report.ts';

// RFC 8032 §7.1, TEST 1: Ed25519 with an empty message (secret key, public key and signature hex).
const RFC8032_SECRET = '9d61b19deffd5a60ba844af492ec2cc44449c5697b326919703bac031cae7f60';
const RFC8032_PUBLIC = 'd75a980182b10ab7d54bfed3c964073a0ee172f3daa62325af021a68f707511a';
const RFC8032_SIG = 'e5564300c360ac729086e2cc806e828a84877f1eb8e5d974d873e065224901555fb8821590a33bacc61e39701cf9b46bd25bf5f0595bbe24655141438e7a100b';

function report(): Record<string, unknown> {
  return toJsonValue(fixtureReport());
}

describe('report digest', () => {
  it('is SHA-256 of the canonical JSON without the signoff block', () => {
    const r = report();
    const { signoff: _s, ...body } = r;
    // SHA-256 itself checked against FIPS 180-2 Appendix B.1: sha256("abc").
    expect(createHash('sha256').update('abc').digest('hex')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(reportDigest(r)).toBe(createHash('sha256').update(canonicalJson(body)).digest('hex'));
  });

  it('does not depend on key order or on the signoff block', () => {
    const r = report();
    const reversed = Object.fromEntries(Object.entries(r).reverse());
    expect(reportDigest(reversed)).toBe(reportDigest(r));
    expect(reportDigest({ ...r, signoff: { reviewer: 'x' } })).toBe(reportDigest(r));
  });

  it('changes when one number deep in the report changes', () => {
    const r = report();
    const tampered = structuredClone(r) as { targets: { ess: number }[] };
    (tampered.targets[0] as { ess: number }).ess = 43;
    expect(reportDigest(tampered)).not.toBe(reportDigest(r));
  });
});

describe('Ed25519 through node:crypto', () => {
  it('reproduces RFC 8032 §7.1 TEST 1 (sign and verify)', () => {
    // Ed25519 PKCS#8 and SPKI DER prefixes: RFC 8410 §7 and §4 structures.
    const pkcs8 = Buffer.concat([Buffer.from('302e020100300506032b657004220420', 'hex'), Buffer.from(RFC8032_SECRET, 'hex')]);
    const spki = Buffer.concat([Buffer.from('302a300506032b6570032100', 'hex'), Buffer.from(RFC8032_PUBLIC, 'hex')]);
    const privateKey = createPrivateKey({ key: pkcs8, format: 'der', type: 'pkcs8' });
    const publicKey = createPublicKey({ key: spki, format: 'der', type: 'spki' });
    expect(edSign(null, Buffer.alloc(0), privateKey).toString('hex')).toBe(RFC8032_SIG);
    expect(edVerify(null, Buffer.alloc(0), publicKey, Buffer.from(RFC8032_SIG, 'hex'))).toBe(true);
  });
});

describe('sign and verify', () => {
  const keys = generateSigningKeys();

  it('round-trips: a fresh signature verifies, also against the signer\'s public key', () => {
    const r = report();
    const signoff = createSignoff(r, { reviewer: 'R. Okafor', decision: 'approve-with-conditions', note: 'only for north-harbor', privateKeyPem: keys.privateKeyPem, now: new Date('2024-05-03T09:00:00Z') });
    expect(signoff.signed_at).toBe('2024-05-03T09:00:00.000Z');
    expect(signoff.digest).toMatch(/^[0-9a-f]{64}$/);
    expect(checkSignoff({ ...r, signoff }, { publicKeyPem: keys.publicKeyPem })).toEqual([]);
  });

  it('detects a changed number in the report as a digest mismatch', () => {
    const r = report();
    const signoff = createSignoff(r, { reviewer: 'R', decision: 'approve', privateKeyPem: keys.privateKeyPem });
    const tampered = structuredClone({ ...r, signoff }) as unknown as Record<string, unknown> & { input: { rows: number } };
    tampered.input.rows += 1;
    const problems = checkSignoff(tampered);
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatchObject({ kind: 'digest', expected: signoff.digest });
  });

  it('detects a changed decision (the signature covers the sign-off block)', () => {
    const r = report();
    const signoff = createSignoff(r, { reviewer: 'R', decision: 'reject', privateKeyPem: keys.privateKeyPem });
    expect(checkSignoff({ ...r, signoff: { ...signoff, decision: 'approve' } })).toEqual([{ kind: 'signature-invalid' }]);
  });

  it('detects a signature by another key than the one expected', () => {
    const r = report();
    const other = generateSigningKeys();
    const signoff = createSignoff(r, { reviewer: 'R', decision: 'approve', privateKeyPem: other.privateKeyPem });
    const problems = checkSignoff({ ...r, signoff }, { publicKeyPem: keys.publicKeyPem });
    expect(problems.map((p) => p.kind)).toEqual(['public-key-mismatch']);
  });

  it('reports an unsigned report and a missing signature', () => {
    const r = report();
    expect(checkSignoff(r)).toEqual([{ kind: 'unsigned' }]);
    const unsignedBlock = createSignoff(r, { reviewer: 'R', decision: 'approve' });
    expect(checkSignoff({ ...r, signoff: unsignedBlock })).toEqual([]);
    expect(checkSignoff({ ...r, signoff: unsignedBlock }, { publicKeyPem: keys.publicKeyPem })).toEqual([{ kind: 'signature-missing' }]);
  });
});
