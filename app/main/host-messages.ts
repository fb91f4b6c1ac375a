import type { HostRequest } from '../engine/host/messages.ts';
import type { PathGrants } from './file-access.ts';

export { parseHostRequest } from '../engine/host/requests.ts';
export { parseHostReply } from '../engine/host/replies.ts';

/** The renderer may register only logs the user opened (picked, passed at launch, or recent). */
export function admitRequest(request: HostRequest, grants: PathGrants): HostRequest {
  if (request.kind === 'register') grants.assertGranted(request.source.paths);
  return request;
}
