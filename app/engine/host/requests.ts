/** The host's side of arrival: only requests, each checked against its schema in messages.ts. */
import { hostRequest, REPLY_KINDS, type HostRequest } from './messages.ts';
import { ProtocolError, protocolError } from './protocol-error.ts';

export function parseHostRequest(input: unknown): HostRequest {
  const kind = (input as { kind?: unknown } | null)?.kind;
  if (typeof kind === 'string' && (REPLY_KINDS as readonly string[]).includes(kind)) {
    throw new ProtocolError(`Malformed engine host message: the host accepts requests only, not "${kind}".`);
  }
  const parsed = hostRequest.safeParse(input);
  if (!parsed.success) throw protocolError(parsed.error, 'engine host request');
  return parsed.data;
}

/** The id of a message that failed validation, so its error reply reaches the right caller (0 when none). */
export function idOf(input: unknown): number {
  const id = (input as { id?: unknown } | null)?.id;
  return typeof id === 'number' && Number.isSafeInteger(id) && id >= 0 ? id : 0;
}
