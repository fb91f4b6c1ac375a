/** Base64 (RFC 4648 §4, with padding) for binary payloads inside JSON messages; no Node or DOM APIs. */
const ALPHABET = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';
const CODES = new Int16Array(128).fill(-1);
for (let i = 0; i < ALPHABET.length; i++) CODES[ALPHABET.charCodeAt(i)] = i;

const ASCII = Uint8Array.from(ALPHABET, (ch) => ch.charCodeAt(0));

export function toBase64(bytes: Uint8Array): string {
  const out = new Uint8Array(Math.ceil(bytes.length / 3) * 4);
  let o = 0;
  for (let i = 0; i < bytes.length; i += 3) {
    const rest = bytes.length - i;
    const n = ((bytes[i] as number) << 16) | ((rest > 1 ? (bytes[i + 1] as number) : 0) << 8) | (rest > 2 ? (bytes[i + 2] as number) : 0);
    out[o++] = ASCII[n >> 18] as number;
    out[o++] = ASCII[(n >> 12) & 63] as number;
    out[o++] = rest > 1 ? (ASCII[(n >> 6) & 63] as number) : 61;
    out[o++] = rest > 2 ? (ASCII[n & 63] as number) : 61;
  }
  // The output is ASCII, which every TextDecoder label decodes unchanged.
  return new TextDecoder().decode(out);
}

function code(text: string, i: number): number {
  const c = text.charCodeAt(i);
  return c < 128 ? (CODES[c] as number) : -1;
}

/** Null when the text is not padded base64 of this alphabet. */
export function fromBase64(text: string): Uint8Array | null {
  if (text.length % 4 !== 0) return null;
  const pad = text.endsWith('==') ? 2 : text.endsWith('=') ? 1 : 0;
  const out = new Uint8Array((text.length / 4) * 3 - pad);
  let o = 0;
  for (let i = 0; i < text.length; i += 4) {
    const tail = i + 4 === text.length ? pad : 0;
    const a = code(text, i);
    const b = code(text, i + 1);
    const c = tail >= 2 ? 0 : code(text, i + 2);
    const d = tail >= 1 ? 0 : code(text, i + 3);
    if ((a | b | c | d) < 0) return null;
    const n = (a << 18) | (b << 12) | (c << 6) | d;
    out[o++] = n >> 16;
    if (tail < 2) out[o++] = (n >> 8) & 255;
    if (tail < 1) out[o++] = n & 255;
  }
  return out;
}
