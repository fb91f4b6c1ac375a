import type { WebSocket } from 'ws';
import { decodeFrame, encodeFrame } from '../../app/engine/host/frames.ts';
import type { Transport } from '../../app/engine/host/transport.ts';

/**
 * The host protocol on the server's end of a WebSocket (frames.ts: JSON text frames, one binary frame
 * for a message with bytes). Frames that arrive before a listener is attached are held and delivered
 * once one is.
 */
export function socketTransport(ws: WebSocket): Transport {
  let listener: ((message: unknown) => void) | null = null;
  const held: unknown[] = [];
  ws.on('message', (data, isBinary) => {
    const bytes = Array.isArray(data) ? Buffer.concat(data) : Buffer.isBuffer(data) ? data : Buffer.from(data);
    const message = decodeFrame(isBinary ? new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength) : bytes.toString('utf8'));
    if (listener) listener(message);
    else held.push(message);
  });
  return {
    send(message) {
      if (ws.readyState === ws.OPEN) ws.send(encodeFrame(message));
    },
    onMessage(next) {
      listener = next;
      for (const message of held.splice(0)) next(message);
    },
    onClose(next) {
      ws.once('close', (code) => next(`socket closed (${code})`));
    },
  };
}
