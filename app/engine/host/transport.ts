import type { HostMessage } from './messages.ts';

/**
 * A message channel carrying protocol messages as plain objects, whatever the carrier: one file per
 * carrier (spawn.ts and child-main.ts for a Node child, app/main/utility-host.ts for Electron's utility
 * process, renderer/engine/desktop-transport.ts for the preload bridge, scripts/web/socket-transport.ts
 * and renderer/engine/ws-transport.ts for the WebSocket). The cube's bytes stay bytes on every carrier.
 */
export interface Transport {
  send(message: HostMessage): void;
  /** Raw arrivals; the receiver validates them (requests.ts, replies.ts). */
  onMessage(listener: (message: unknown) => void): void;
  /** The other side went away (process exit, socket close). */
  onClose?(listener: (reason: string) => void): void;
}
