/**
 * The closed message set between the engine (on the page) and the Parquet decode worker
 * (decode.worker.ts), each declared once as a zod schema and checked on arrival. The worker opens one
 * File (a Blob: it reads it by range itself), decodes one row group's columns per request and answers
 * Arrow IPC bytes, which it transfers rather than copies.
 */
import { z } from 'zod';

const id = z.number().int().nonnegative().max(Number.MAX_SAFE_INTEGER);

export const DecodeRequestSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('open'), id, file: z.instanceof(Blob) }).strict(),
  z.object({ kind: z.literal('row-group'), id, index: z.number().int().nonnegative(), columns: z.array(z.string().min(1)).min(1), rows: z.number().int().nonnegative() }).strict(),
]);

export const DecodeReplySchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('opened'), id }).strict(),
  z.object({ kind: z.literal('row-group'), id, ipc: z.instanceof(Uint8Array) }).strict(),
  z.object({ kind: z.literal('error'), id, message: z.string() }).strict(),
]);

export type DecodeRequest = z.infer<typeof DecodeRequestSchema>;
export type DecodeReply = z.infer<typeof DecodeReplySchema>;
