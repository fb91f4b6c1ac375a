/**
 * The arguments of every renderer -> main channel, declared once as zod schemas (the same library as the
 * engine host protocol, app/engine/host/messages.ts); ipc-contract.ts takes its types from here, and
 * validateIpc (ipc.ts) parses each call with them.
 */
import { z } from 'zod';
import { hostRequest } from '../engine/host/messages.ts';

const MAX_PATHS = 1_000;
const MAX_PATH_CHARS = 4_096;
const MAX_NAME_CHARS = 255;
/** A report with every finding's example rows stays far below this. */
export const MAX_REPORT_CHARS = 256 * 1024 * 1024;

const noNul = (s: string): boolean => !s.includes('\0');
const fileName = z.string().max(MAX_NAME_CHARS, `is longer than ${MAX_NAME_CHARS} characters`).refine(noNul, 'contains a NUL character');
const pathList = z.array(z.string().min(1).max(MAX_PATH_CHARS).refine(noNul, 'must be a non-empty path without NUL characters'))
  .min(1, `must be a list of 1 to ${MAX_PATHS} paths`).max(MAX_PATHS, `must be a list of 1 to ${MAX_PATHS} paths`);

export const saveReportRequest = z.strictObject({
  format: z.enum(['json', 'html'], 'must be "json" or "html"'),
  contents: z.string().max(MAX_REPORT_CHARS),
  suggestedName: fileName.optional(),
});
export type SaveReportRequest = z.infer<typeof saveReportRequest>;

export const printRequest = z.strictObject({ suggestedName: fileName.optional() });
export type PrintRequest = z.infer<typeof printRequest>;

const none = z.tuple([]);

/** Each channel's argument list. */
export const INVOKE_ARGS = {
  'launch:log': none,
  'log:choose': none,
  'recent:list': none,
  'recent:add': z.tuple([pathList]),
  'target-table:choose': none,
  'reports:choose': none,
  'report:save': z.tuple([saveReportRequest]),
  'report:print-pdf': z.tuple([printRequest]),
  'engine:send': z.tuple([hostRequest]),
  'engine:status': none,
} as const;

export type InvokeArgsOf<C extends keyof typeof INVOKE_ARGS> = z.infer<(typeof INVOKE_ARGS)[C]>;
