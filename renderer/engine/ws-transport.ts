import { createHostEngine, type HostEngine } from '../../app/engine/host/client.ts';
import { decodeFrame, encodeFrame } from '../../app/engine/host/frames.ts';
import type { HostMessage } from '../../app/engine/host/messages.ts';
import type { Transport } from '../../app/engine/host/transport.ts';
import { EngineError } from '../../app/engine/types.ts';

const CONNECT_TIMEOUT_MS = 10_000;

/**
 * The host protocol over a browser WebSocket (app/engine/host/frames.ts: JSON text frames, and one binary
 * frame for the audit result so the cube's Arrow IPC arrives as bytes); arrivals are validated by the client.
 */
function webSocketTransport(socket: WebSocket): Transport {
  socket.binaryType = 'arraybuffer';
  const closeListeners: ((reason: string) => void)[] = [];
  socket.addEventListener('close', (event) => {
    const reason = event.reason || (event.code === 1000 ? 'closed' : `connection lost, code ${event.code}`);
    for (const listener of closeListeners) listener(reason);
  });
  return {
    send(message: HostMessage) {
      if (socket.readyState !== WebSocket.OPEN) throw new EngineError('closed', 'The connection to the local engine is closed; restart it and reload this page.');
      socket.send(encodeFrame(message));
    },
    onMessage(listener) {
      socket.addEventListener('message', (event: MessageEvent<unknown>) => {
        const data = event.data;
        listener(typeof data === 'string' ? decodeFrame(data) : data instanceof ArrayBuffer ? decodeFrame(new Uint8Array(data)) : null);
      });
    },
    onClose(listener) { closeListeners.push(listener); },
  };
}

export function socketUrl(host: string, token: string): string {
  const url = new URL(host);
  url.searchParams.set('token', token);
  return url.toString();
}

/** Opens the socket named in the page URL and checks the host answers the protocol before use. */
export async function connectHostEngine(host: string, token: string): Promise<HostEngine> {
  const socket = new WebSocket(socketUrl(host, token));
  await new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => { socket.close(); reject(new EngineError('closed', `The local engine at ${host} did not answer within ${CONNECT_TIMEOUT_MS / 1000} s.`)); }, CONNECT_TIMEOUT_MS);
    socket.addEventListener('open', () => { clearTimeout(timer); resolve(); }, { once: true });
    socket.addEventListener('error', () => {
      clearTimeout(timer);
      reject(new EngineError('closed', `Could not connect to the local engine at ${host}. Is \`npm run web\` still running? Its address and token change at every start.`));
    }, { once: true });
  });
  const engine = createHostEngine(webSocketTransport(socket), { onClosed: async () => { socket.close(1000); } });
  await engine.connect();
  return engine;
}
