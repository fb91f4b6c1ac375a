/** The client's side of arrival: only replies, each checked against its schema in messages.ts. */
import { hostReply, REQUEST_KINDS, type HostReply } from './messages.ts';
import { ProtocolError, protocolError } from './protocol-error.ts';

export function parseHostReply(input: unknown): HostReply {
  const kind = (input as { kind?: unknown } | null)?.kind;
  if (typeof kind === 'string' && (REQUEST_KINDS as readonly string[]).includes(kind)) {
    throw new ProtocolError(`Malformed engine host message: "${kind}" is a request; the engine host sends replies only.`);
  }
  const parsed = hostReply.safeParse(input);
  if (!parsed.success) throw protocolError(parsed.error, 'engine host reply');
  return parsed.data;
}
