import type { z } from 'zod';

/** A message outside the protocol; its text says which field is wrong and why. */
export class ProtocolError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ProtocolError';
  }
}

/** The first problem zod found, as one sentence naming the field (e.g. `"request.source" must be ...`). */
export function protocolError(error: z.ZodError, what: string): ProtocolError {
  const issue = error.issues[0];
  if (!issue) return new ProtocolError(`Malformed ${what}.`);
  const where = issue.path.length ? `"${issue.path.map(String).join('.')}"` : 'the message';
  return new ProtocolError(`Malformed ${what}: ${where} ${issue.message.replace(/^Invalid input: /, '')}.`);
}
