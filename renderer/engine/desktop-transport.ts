import { createHostEngine, type HostEngine } from '../../app/engine/host/client.ts';
import type { HostMessage, HostRequest } from '../../app/engine/host/messages.ts';
import type { Transport } from '../../app/engine/host/transport.ts';
import { EngineError } from '../../app/engine/types.ts';

/**
 * The host protocol through the preload bridge (Electron IPC to the engine utility process). Messages are
 * structured clones all the way, so the cube's bytes arrive as a Uint8Array.
 */
function desktopTransport(api: NonNullable<Window['counterweight']>): Transport {
  const closeListeners: ((reason: string) => void)[] = [];
  api.engine.onStatus((status) => {
    if (status.state === 'failed') for (const listener of closeListeners) listener(status.message ?? 'the engine host failed');
  });
  return {
    send(message: HostMessage) {
      void api.engine.send(message as HostRequest);
    },
    onMessage(listener) { api.engine.onMessage((message) => listener(message)); },
    onClose(listener) { closeListeners.push(listener); },
  };
}

export async function desktopHostEngine(): Promise<HostEngine> {
  const api = window.counterweight;
  if (!api) throw new EngineError('closed', 'The desktop bridge is missing; this page was not opened by the Counterweight app.');
  const engine = createHostEngine(desktopTransport(api));
  await engine.connect();
  return engine;
}
