import type { Report, InputFile } from '../../app/core/model/report.ts';
import type { SourceFormat } from '../../app/engine/types.ts';
import type { RoleEvidence, RoleSuggestion } from '../../app/core/roles/roles.ts';
import type { Profile } from '../../app/core/scan/profile.ts';
import type { CubeCell } from '../../app/core/cube/types.ts';
import type { TargetInput } from '../../app/core/targets/targets.ts';
import type { CubeSession } from './cube-session.ts';
import type { ProgressPoint } from '../../app/core/progress.ts';

export type Stage = 'profile' | 'cube' | 'tails' | 'checks';
export const STAGES: readonly Stage[] = ['profile', 'cube', 'tails', 'checks'];

/** A log registered with the engine, described enough to map its roles. */
export interface OpenedSource {
  readonly label: string;
  readonly relation: string;
  /** The table-function SQL behind the relation, recorded in the report. */
  readonly scanSql: string;
  readonly format: SourceFormat;
  readonly files: readonly InputFile[];
  /** The core's profile (scan/profile.ts profileLog): rows, types, distinct values per column (exact, or over the first rows where labelled). */
  readonly profile: Profile;
  /** Weight-balance evidence per candidate action column (app/core/roles/evidence.ts); absent for a source opened without it. */
  readonly evidence?: RoleEvidence;
  readonly suggestions: readonly RoleSuggestion[];
}

/**
 * What a finished audit leaves for interactive work without a rescan: the cube it scanned (its cells, and
 * the same cube as a table in the page's DuckDB-Wasm worker), the profile it resolved roles from, and the
 * targets it ran with.
 */
export interface AuditWorkspace {
  readonly cells: readonly CubeCell[];
  readonly profile: Profile;
  readonly targets: readonly TargetInput[];
  /** Absent only when the page's worker could not take the cube. */
  readonly cube?: CubeSession;
}

/** The engine's lifecycle as one immutable value (STYLE.md §8). */
export type EngineStatus =
  | { readonly kind: 'idle' }
  | { readonly kind: 'loading'; readonly message: string }
  | { readonly kind: 'ready'; readonly source: OpenedSource }
  | { readonly kind: 'running'; readonly source: OpenedSource; readonly stage: Stage; readonly finished: readonly Stage[]; readonly point?: ProgressPoint }
  | { readonly kind: 'failed'; readonly message: string; readonly source: OpenedSource | null }
  | { readonly kind: 'done'; readonly report: Report; readonly source: OpenedSource | null; readonly workspace?: AuditWorkspace };

export type StatusEvent =
  | { readonly type: 'reset' }
  | { readonly type: 'loading'; readonly message: string }
  | { readonly type: 'opened'; readonly source: OpenedSource }
  | { readonly type: 'started' }
  | { readonly type: 'progress'; readonly stage: Stage; readonly done?: boolean; readonly point?: ProgressPoint }
  | { readonly type: 'finished'; readonly report: Report; readonly workspace?: AuditWorkspace }
  | { readonly type: 'failed'; readonly message: string }
  | { readonly type: 'cancelled' }
  | { readonly type: 'show-report'; readonly report: Report };

export const IDLE: EngineStatus = { kind: 'idle' };

export function sourceOf(status: EngineStatus): OpenedSource | null {
  return 'source' in status ? status.source : null;
}

export function nextStatus(status: EngineStatus, event: StatusEvent): EngineStatus {
  switch (event.type) {
    case 'reset':
      return IDLE;
    case 'loading':
      return { kind: 'loading', message: event.message };
    case 'opened':
      return { kind: 'ready', source: event.source };
    case 'started': {
      const source = sourceOf(status);
      return source ? { kind: 'running', source, stage: 'profile', finished: [] } : status;
    }
    case 'progress': {
      if (status.kind !== 'running') return status;
      const finished = event.done && !status.finished.includes(event.stage) ? [...status.finished, event.stage] : status.finished;
      return { ...status, stage: event.point?.stage ?? event.stage, finished, ...(event.point ? { point: event.point } : {}) };
    }
    case 'finished':
      return { kind: 'done', report: event.report, source: sourceOf(status), ...(event.workspace ? { workspace: event.workspace } : {}) };
    case 'failed':
      return { kind: 'failed', message: event.message, source: sourceOf(status) };
    case 'cancelled': {
      const source = sourceOf(status);
      return source ? { kind: 'ready', source } : IDLE;
    }
    case 'show-report':
      return { kind: 'done', report: event.report, source: null };
  }
}
