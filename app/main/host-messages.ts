import { isRequest, parseHostMessage, type HostReply, type HostRequest } from '../engine/host/protocol.ts';
import type { PathGrants } from './file-access.ts';

/** A message the renderer may send to the engine host: a valid protocol request, never a reply. */
export function parseHostRequest(input: unknown): HostRequest {
  const message = parseHostMessage(input);
  if (!isRequest(message)) throw new Error(`"${message.kind}" is a reply; the renderer may only send requests.`);
  return message;
}

/** A message the engine host may send to the renderer: a valid protocol reply, never a request. */
export function parseHostReply(input: unknown): HostReply {
  const message = parseHostMessage(input);
  if (isRequest(message)) throw new Error(`"${message.kind}" is a request; the engine host may only send replies.`);
  return message;
}

/** The renderer may register only logs the user opened (picked, passed at launch, or recent). */
export function admitRequest(request: HostRequest, grants: PathGrants): HostRequest {
  if (request.kind === 'register') grants.assertGranted(request.source.paths);
  return request;
}
