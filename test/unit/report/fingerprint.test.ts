import { mkdtempSync, writeFileSync, utimesSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { displayPath, fingerprintFiles, sha256File } from '../../../app/report/fingerprint.ts';

describe('input fingerprint', () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'cw-fp-'));

  it('hashes a file by streaming (FIPS 180-2 B.1 and the empty-input digest)', async () => {
    const abc = path.join(dir, 'abc.txt');
    const empty = path.join(dir, 'empty.txt');
    writeFileSync(abc, 'abc');
    writeFileSync(empty, '');
    expect(await sha256File(abc)).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    // SHA-256 of the empty string, FIPS 180-4 examples (common knowledge of the trade).
    expect(await sha256File(empty)).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
  });

  it('hashes a multi-chunk file the same as hashing it at once', async () => {
    const big = path.join(dir, 'big.bin');
    const bytes = Buffer.alloc(3 * 65536 + 17, 0);
    for (let i = 0; i < bytes.length; i++) bytes[i] = (i * 31) & 0xff;
    writeFileSync(big, bytes);
    const { createHash } = await import('node:crypto');
    expect(await sha256File(big)).toBe(createHash('sha256').update(bytes).digest('hex'));
  });

  it('records path relative to cwd, bytes and mtime in ISO-8601', async () => {
    const f = path.join(dir, 'log.csv');
    writeFileSync(f, 'a,b\n1,2\n');
    utimesSync(f, new Date('2024-01-02T03:04:05Z'), new Date('2024-01-02T03:04:05Z'));
    const [entry] = await fingerprintFiles([f], dir);
    expect(entry).toEqual({ path: 'log.csv', bytes: 8, sha256: expect.stringMatching(/^[0-9a-f]{64}$/), modified: '2024-01-02T03:04:05.000Z' });
  });

  it('keeps absolute paths outside cwd and refuses folders', async () => {
    expect(displayPath('/elsewhere/x.csv', dir)).toBe('/elsewhere/x.csv');
    await expect(fingerprintFiles([dir], '/')).rejects.toThrow(/not a regular file/);
  });
});
