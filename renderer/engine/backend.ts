import type { Report } from '../../app/core/model/report.ts';
import type { ProgressPoint } from '../../app/core/progress.ts';
import type { DrillRoles, DrillSelection, PageRequest } from '../../app/core/scan/drill.ts';
import type { Table } from '../../app/core/table.ts';
import type { AuditDraft } from '../state/draft.ts';
import type { AuditWorkspace, OpenedSource, Stage } from './status.ts';

export interface Progress {
  readonly stage: Stage;
  readonly done?: boolean;
  /** Where the audit is: stage k of n, share of the log read by the running pass, share done, time left. */
  readonly point?: ProgressPoint;
}

/**
 * A log as this page can name it: browser File handles (web), paths the engine host can read, or picked
 * files a local host finds by name in its folders (hosted mode; a page never learns a File's path).
 */
export type LogInput =
  | { readonly kind: 'files'; readonly files: readonly File[] }
  | { readonly kind: 'paths'; readonly paths: readonly string[] }
  | { readonly kind: 'named'; readonly files: readonly File[] };

export interface AuditOutcome {
  readonly report: Report;
  readonly workspace: AuditWorkspace;
}

/** Where audits run for this page: the browser engine, the desktop host, or a host over WebSocket. */
export interface AuditBackend {
  /** Engine kind recorded in report.run. */
  readonly engineKind: string;
  open(input: LogInput): Promise<OpenedSource>;
  run(source: OpenedSource, draft: AuditDraft, onProgress: (p: Progress) => void, signal: AbortSignal): Promise<AuditOutcome>;
  /** One page of the rows behind a segment-map cell or finding, in drill order (app/core/scan/drill.ts). */
  rows(source: OpenedSource, request: RowsRequest): Promise<Table>;
  /** How many rows that selection holds. */
  rowCount(source: OpenedSource, selection: RowSelection): Promise<number>;
  close(): Promise<void>;
}

/** Which rows to drill into, under the roles of the audit that drew the cell. */
export interface RowSelection {
  readonly roles: DrillRoles;
  readonly selection: DrillSelection;
}

export interface RowsRequest extends RowSelection {
  readonly page: PageRequest;
}

export function errorMessage(error: unknown): string {
  if (error instanceof Error) return error.message;
  return String(error);
}
