/**
 * The host protocol on a WebSocket (no Node or DOM APIs: the page and the server share it). A message
 * without bytes is one JSON text frame. A message with bytes (the audit's cube) is one binary frame, so
 * Arrow IPC crosses as it is instead of as base64 text:
 *   [u32 big-endian: length of the JSON header][JSON header, UTF-8][bytes of each binary field, in order]
 * where the header is the message with each binary field replaced by {"$bytes": <length>}.
 */
import type { HostMessage } from './messages.ts';

export function encodeFrame(message: HostMessage): string | Uint8Array {
  const parts: Uint8Array[] = [];
  const header: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(message)) {
    if (v instanceof Uint8Array) {
      header[k] = { $bytes: v.byteLength };
      parts.push(v);
    } else {
      header[k] = v;
    }
  }
  if (parts.length === 0) return JSON.stringify(message);
  const head = new TextEncoder().encode(JSON.stringify(header));
  const out = new Uint8Array(4 + head.byteLength + parts.reduce((n, p) => n + p.byteLength, 0));
  new DataView(out.buffer).setUint32(0, head.byteLength);
  out.set(head, 4);
  let at = 4 + head.byteLength;
  for (const p of parts) {
    out.set(p, at);
    at += p.byteLength;
  }
  return out;
}

/** A frame back to a message for the parser to validate; anything malformed becomes a value it rejects. */
export function decodeFrame(data: string | Uint8Array): unknown {
  if (typeof data === 'string') {
    try {
      return JSON.parse(data);
    } catch {
      return { malformed: 'not JSON' };
    }
  }
  try {
    if (data.byteLength < 4) return { malformed: 'short binary frame' };
    const length = new DataView(data.buffer, data.byteOffset, data.byteLength).getUint32(0);
    if (4 + length > data.byteLength) return { malformed: 'binary frame header runs past the frame' };
    const header = JSON.parse(new TextDecoder('utf-8', { fatal: true }).decode(data.subarray(4, 4 + length))) as Record<string, unknown>;
    if (typeof header !== 'object' || header === null || Array.isArray(header)) return { malformed: 'binary frame header is not an object' };
    let at = 4 + length;
    for (const [k, v] of Object.entries(header)) {
      const bytes = (v as { $bytes?: unknown } | null)?.$bytes;
      if (typeof v !== 'object' || v === null || typeof bytes !== 'number') continue;
      if (!Number.isSafeInteger(bytes) || bytes < 0 || at + bytes > data.byteLength) return { malformed: 'binary field runs past the frame' };
      // A copy, so the message owns its bytes whatever the frame's buffer is reused for.
      header[k] = data.slice(at, at + bytes);
      at += bytes;
    }
    if (at !== data.byteLength) return { malformed: 'binary frame has trailing bytes' };
    return header;
  } catch {
    return { malformed: 'binary frame header is not JSON' };
  }
}
