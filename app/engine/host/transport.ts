import type { HostMessage } from './protocol.ts';

/** A message channel carrying protocol messages as plain JSON-safe objects, whatever the carrier. */
export interface Transport {
  send(message: HostMessage): void;
  /** Raw arrivals; the receiver validates them with parseHostMessage. */
  onMessage(listener: (message: unknown) => void): void;
  /** The other side went away (process exit, socket close). */
  onClose?(listener: (reason: string) => void): void;
}
