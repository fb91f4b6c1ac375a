import type { HostReply, HostRequest } from '../engine/host/messages.ts';
import { type EngineHost, type EngineHostOptions, startEngineHost } from './engine-host.ts';
import { parseHostReply } from './host-messages.ts';

export type EngineRelayOptions = Omit<EngineHostOptions<HostReply>, 'parseReply'>;

/**
 * The engine host as the renderer sees it. When the host dies, every request still waiting for an
 * answer is answered with a 'closed' error, so the renderer's client fails it instead of waiting forever.
 */
export function startEngineRelay(options: EngineRelayOptions): EngineHost<HostRequest> {
  const waiting = new Set<number>();
  const host = startEngineHost<HostRequest, HostReply>({
    ...options,
    parseReply: parseHostReply,
    onReply: (reply) => {
      if (reply.kind !== 'audit-progress') waiting.delete(reply.id);
      options.onReply(reply);
    },
    onStatus: (status) => {
      if (status.state === 'restarting' || status.state === 'failed') {
        const message = status.message ?? 'The engine stopped.';
        for (const id of waiting) options.onReply({ kind: 'error', id, code: 'closed', message });
        waiting.clear();
      }
      options.onStatus(status);
    },
  });
  return {
    send(request) {
      host.send(request);
      waiting.add(request.id);
    },
    status: () => host.status(),
    stop: () => host.stop(),
  };
}
