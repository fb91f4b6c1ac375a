import type { Report } from '../../app/core/model/report.ts';
import type { AuditDraft } from '../state/draft.ts';
import type { OpenedSource, Stage } from './status.ts';

export interface Progress {
  readonly stage: Stage;
  readonly done?: boolean;
}

/** A log as this page can name it: browser File handles (web) or paths the engine host can read. */
export type LogInput =
  | { readonly kind: 'files'; readonly files: readonly File[] }
  | { readonly kind: 'paths'; readonly paths: readonly string[] };

/** Where audits run for this page: the browser engine, the desktop host, or a host over WebSocket. */
export interface AuditBackend {
  /** Engine kind recorded in report.run. */
  readonly engineKind: string;
  open(input: LogInput): Promise<OpenedSource>;
  run(source: OpenedSource, draft: AuditDraft, onProgress: (p: Progress) => void, signal: AbortSignal): Promise<Report>;
  close(): Promise<void>;
}

export function errorMessage(error: unknown): string {
  if (error instanceof Error) return error.message;
  return String(error);
}
