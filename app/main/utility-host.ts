import { createNativeEngine, type NativeEngine } from '../engine/native.ts';
import type { HostMessage } from '../engine/host/messages.ts';
import { serveEngine } from '../engine/host/server.ts';
import type { Transport } from '../engine/host/transport.ts';

/** The part of Electron's process.parentPort used here: messages arrive wrapped in a MessageEvent. */
export interface ParentPortLike {
  on(event: 'message', listener: (event: { data: unknown }) => void): unknown;
  postMessage(message: unknown): void;
}

/**
 * A utility process receives `{ data }` events on process.parentPort where a Node child receives bare
 * messages on process; this adapts the first to the host Transport. Arrivals are held while no
 * listener is attached (between an engine closing and the next one opening).
 */
export function parentPortTransport(port: ParentPortLike): Transport & { detach(): void } {
  let listener: ((message: unknown) => void) | null = null;
  const held: unknown[] = [];
  port.on('message', (event) => {
    if (listener) listener(event.data);
    else held.push(event.data);
  });
  return {
    send: (message: HostMessage) => port.postMessage(message),
    onMessage(next) {
      listener = next;
      while (listener === next && held.length > 0) next(held.shift());
    },
    detach() {
      listener = null;
    },
  };
}

/**
 * Serves the host protocol on the parent port for the life of the utility process. A `close` request
 * closes the engine and opens a fresh one, so the next log starts from an empty database without the
 * main process restarting anything.
 */
export async function serveOverParentPort(port: ParentPortLike, createEngine: () => Promise<NativeEngine> = () => createNativeEngine({ restrictFileAccess: true })): Promise<void> {
  const transport = parentPortTransport(port);
  const serveFresh = async (): Promise<void> => {
    const engine = await createEngine();
    serveEngine(transport, engine, {
      onClosed: () => {
        transport.detach();
        void serveFresh();
      },
    });
  };
  await serveFresh();
}
