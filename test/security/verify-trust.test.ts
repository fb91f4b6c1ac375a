/**
 * Security regressions for `verify` (issue 18 #2, #3, #4): trust comes from a key the user holds, never
 * from the key embedded in the report; reports are read strictly before any digest; text from a report
 * or log is printed without its control characters. Through the real command, spawned as a user runs it.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { sha256File } from '../../app/report/fingerprint.ts';
import { serializeReport } from '../../app/report/json.ts';
import { createSignoff, generateSigningKeys, loadPublicKey, publicKeyBase64 } from '../../app/report/signoff.ts';
import { keyFingerprint } from '../../app/report/trusted-keys.ts';
import { fixtureReport } from '../unit/report/fixture-report.ts';

const BIN = path.resolve('bin/counterweight.mjs');
const dir = mkdtempSync(path.join(tmpdir(), 'cw-verify-'));
const cli = (args: string[]) => {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd: dir, encoding: 'utf8', env: { ...process.env, NO_COLOR: '1' }, timeout: 60_000 });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
};

const okafor = generateSigningKeys();
const mallory = generateSigningKeys();
const spki = (pem: string) => publicKeyBase64(loadPublicKey(pem));
let body: Record<string, unknown>;

beforeAll(async () => {
  writeFileSync(path.join(dir, 'log.csv'), 'decision_id,promotion,propensity,ordered\nd1,bakery,0.5,1\n');
  const base = fixtureReport();
  // As `sign` reads it: the report as its JSON file holds it.
  body = JSON.parse(serializeReport({ ...base, input: { ...base.input, files: [{ path: 'log.csv', bytes: statSync(path.join(dir, 'log.csv')).size, sha256: await sha256File(path.join(dir, 'log.csv')) }] }, signoff: null })) as Record<string, unknown>;
  writeFileSync(path.join(dir, 'okafor.pub'), okafor.publicKeyPem);
  writeFileSync(path.join(dir, 'trusted.txt'), `# reviewers of the Maple Row evaluation\n${spki(okafor.publicKeyPem)} R. Okafor\n`);
  const signed = { ...body, signoff: createSignoff(body, { reviewer: 'R. Okafor', decision: 'reject', privateKeyPem: okafor.privateKeyPem }) };
  writeFileSync(path.join(dir, 'signed.json'), serializeReport(signed as never));
  // The attack: the verdict changed and the report re-signed with another key under the same name.
  const changed = { ...body, verdict: 'supported' };
  writeFileSync(path.join(dir, 'resigned.json'), serializeReport({ ...changed, signoff: createSignoff(changed, { reviewer: 'R. Okafor', decision: 'approve', privateKeyPem: mallory.privateKeyPem }) } as never));
  writeFileSync(path.join(dir, 'digest-only.json'), serializeReport({ ...body, signoff: createSignoff(body, { reviewer: 'R. Okafor', decision: 'approve' }) } as never));
});

describe('verify: who signed', () => {
  it('issue 18 #2: a report re-signed by another key under the same name does not verify without --public-key, and prints the key\'s fingerprint', () => {
    const r = cli(['verify', 'resigned.json']);
    expect(r.code).toBe(2);
    expect(r.stdout).toContain(`signer not authenticated: the signature is by the key embedded in the report (${keyFingerprint(spki(mallory.publicKeyPem))})`);
    expect(r.stdout).not.toMatch(/^Verified\.$/m);
    expect(r.stdout).toMatch(/^Not verified: who signed is not established\.$/m);
  });

  it('issue 18 #2: with a trusted-keys file the re-signed report names an unknown key, and the real one names its signer', () => {
    const forged = cli(['verify', 'resigned.json', '--trusted-keys', 'trusted.txt']);
    expect(forged.code).toBe(2);
    expect(forged.stdout).toContain(`FAIL  signed by an unknown key ${keyFingerprint(spki(mallory.publicKeyPem))}: it is not in trusted.txt (the sign-off claims R. Okafor)`);
    const real = cli(['verify', 'signed.json', '--trusted-keys', 'trusted.txt']);
    expect(real.stdout).toContain(`ok    signed by R. Okafor (${keyFingerprint(spki(okafor.publicKeyPem))}, trusted.txt line 2)`);
    expect(real.stdout).toMatch(/^Verified\.$/m);
    expect(real.code).toBe(0);
  });

  it('issue 18 #2: a trusted key used under another reviewer\'s name is refused', () => {
    const other = { ...body, signoff: createSignoff(body, { reviewer: 'A. Lindqvist', decision: 'approve', privateKeyPem: okafor.privateKeyPem }) };
    writeFileSync(path.join(dir, 'other-name.json'), serializeReport(other as never));
    const r = cli(['verify', 'other-name.json', '--trusted-keys', 'trusted.txt']);
    expect(r.code).toBe(2);
    expect(r.stdout).toContain("signed by R. Okafor's key");
    expect(r.stdout).toContain('but the sign-off names A. Lindqvist');
  });

  it('issue 18 #2: with --public-key of the real signer the original verifies and the re-signed one fails', () => {
    expect(cli(['verify', 'signed.json', '--public-key', 'okafor.pub']).code).toBe(0);
    const r = cli(['verify', 'resigned.json', '--public-key', 'okafor.pub']);
    expect(r.code).toBe(2);
    expect(r.stdout).toContain('signed by another key than --public-key');
  });

  it('issue 18 #2: a digest-only sign-off is a checksum and does not verify', () => {
    const r = cli(['verify', 'digest-only.json']);
    expect(r.code).toBe(2);
    expect(r.stdout).toContain('ok    digest matches the report (a checksum of its contents)');
    expect(r.stdout).toContain('not signed: the sign-off has a digest and no signature, which is a checksum anyone can recompute');
    expect(r.stdout).not.toMatch(/^Verified\.$/m);
  });
});

describe('verify: reports are read strictly before any digest', () => {
  it('issue 18 #3: a second "verdict" inserted at the top of a signed report is refused as a duplicate key', () => {
    const text = readFileSync(path.join(dir, 'signed.json'), 'utf8').replace('{', '{\n  "verdict": "supported",');
    writeFileSync(path.join(dir, 'duplicate.json'), text);
    const r = cli(['verify', 'duplicate.json', '--trusted-keys', 'trusted.txt']);
    expect(r.code).toBe(3);
    expect(r.stderr).toMatch(/duplicate\.json: duplicate key "verdict" in the top-level object; .* at line \d+, column \d+/);
  });

  it('issue 18 #3: 1e400 is refused with the number and where it is, not a message about --public-key', () => {
    const text = readFileSync(path.join(dir, 'signed.json'), 'utf8').replace(/"rows": \d+/, '"rows": 1e400');
    writeFileSync(path.join(dir, 'huge.json'), text);
    const r = cli(['verify', 'huge.json', '--public-key', 'okafor.pub']);
    expect(r.code).toBe(3);
    expect(r.stderr).toMatch(/the number 1e400 in input\.rows is too large for a 64-bit float/);
    expect(r.stderr).not.toContain('--public-key');
  });
});

describe('terminal output carries no control characters from a report', () => {
  it('issue 18 #4: an ESC sequence in a file path or reviewer name is printed escaped', () => {
    const hostile = { ...body, input: { ...(body.input as object), files: [{ path: 'log.csv\u001b[2K\u001b[1A', bytes: 1, sha256: 'ab'.repeat(32) }] } };
    const signed = { ...hostile, signoff: createSignoff(hostile, { reviewer: 'R. Okafor\u001b[2K\u009b1A', decision: 'approve', privateKeyPem: okafor.privateKeyPem }) };
    writeFileSync(path.join(dir, 'hostile.json'), serializeReport(signed as never));
    const r = cli(['verify', 'hostile.json']);
    // eslint-disable-next-line no-control-regex -- matching control characters is the point here
    expect(r.stdout).not.toMatch(/[\u0000-\u0009\u000b-\u001f\u007f-\u009f]/);
    expect(r.stdout).toContain('log.csv\\x1b[2K\\x1b[1A');
    expect(r.stdout).toContain('R. Okafor\\x1b[2K\\x9b1A');
  });
});
