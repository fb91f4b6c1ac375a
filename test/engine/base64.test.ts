/** Base64 for binary payloads in host messages, against Node's Buffer (RFC 4648 §4 with padding). */
import { describe, expect, it } from 'vitest';
import { fromBase64, toBase64 } from '../../app/engine/host/base64.ts';

describe('base64', () => {
  it.each([0, 1, 2, 3, 4, 5, 6, 255, 256, 257, 100_000])('%i bytes encode as Buffer does and decode back', (length) => {
    const bytes = Uint8Array.from({ length }, (_, i) => (i * 2654435761) >>> 24);
    const text = toBase64(bytes);
    expect(text).toBe(Buffer.from(bytes).toString('base64'));
    expect(fromBase64(text)).toEqual(bytes);
  });

  it.each(['abc', 'ab=c', 'ab c', '====', 'é===', 'Zm9v!mFy'])('refuses %j', (text) => {
    expect(fromBase64(text)).toBeNull();
  });
});
