import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { sha256Blob } from '../../renderer/engine/file-digest.ts';

describe('streaming SHA-256 of a picked file (@noble/hashes)', () => {
  // FIPS 180-4 example vectors (NIST CSRC "SHA256.pdf" examples): "abc" and the 448-bit message.
  it.each([
    ['abc', 'ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad'],
    ['abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq', '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1'],
    ['', 'e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855'],
  ])('hashes %j as the standard says', async (text, expected) => {
    expect(await sha256Blob(new Blob([text]))).toBe(expected);
  });

  it('gives the same digest as node:crypto whatever the chunk size', async () => {
    const bytes = new Uint8Array(100_003);
    for (let i = 0; i < bytes.length; i++) bytes[i] = (i * 2654435761) >>> 24;
    const expected = createHash('sha256').update(bytes).digest('hex');
    for (const size of [1000, 63, 64, 65, 4096, 200_000]) expect(await sha256Blob(new Blob([bytes]), size)).toBe(expected);
  });
});
