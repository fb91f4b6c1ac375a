import { createContext, useCallback, useContext, useEffect, useMemo, useReducer, useRef, type ReactNode } from 'react';
import type { Report } from '../../app/core/model/report.ts';
import type { AuditDraft } from '../state/draft.ts';
import type { Table } from '../../app/core/table.ts';
import { errorMessage, type AuditBackend, type LogInput, type RowSelection, type RowsRequest } from './backend.ts';
import { traitsOf, type ModeTraits, type PageMode } from './mode.ts';
import { IDLE, nextStatus, type EngineStatus, type OpenedSource } from './status.ts';

export interface EngineApi {
  readonly status: EngineStatus;
  readonly mode: PageMode;
  readonly traits: ModeTraits;
  open(input: LogInput): void;
  openDemo(): void;
  run(draft: AuditDraft): void;
  cancel(): void;
  reset(): void;
  showReport(report: Report): void;
  /** Row drill-down pages and counts, read by the page's engine (AuditBackend.rows). */
  rows(source: OpenedSource, request: RowsRequest): Promise<Table>;
  rowCount(source: OpenedSource, selection: RowSelection): Promise<number>;
}

const EngineContext = createContext<EngineApi | null>(null);

export function useEngine(): EngineApi {
  const api = useContext(EngineContext);
  if (!api) throw new Error('useEngine must be used inside <EngineProvider>');
  return api;
}

interface Props {
  readonly mode: PageMode;
  /** Starts the engine for this page; called once, on the first open. */
  readonly createBackend: (mode: PageMode) => Promise<AuditBackend>;
  /** The demo log as this mode names it (fetched File, or a host path). */
  readonly demoInput: (mode: PageMode) => Promise<LogInput>;
  readonly children: ReactNode;
}

function describeInput(input: LogInput): string {
  return input.kind === 'paths' ? input.paths.join(', ') : input.files.map((f) => f.name).join(', ');
}

/** Owns the engine's lifecycle; the tree below sees only its status value (STYLE.md §8). */
export function EngineProvider({ mode, createBackend, demoInput, children }: Props) {
  const [status, dispatch] = useReducer(nextStatus, IDLE);
  const backendRef = useRef<Promise<AuditBackend> | null>(null);
  const abortRef = useRef<AbortController | null>(null);

  const backend = useCallback(() => {
    backendRef.current ??= createBackend(mode);
    backendRef.current.catch(() => { backendRef.current = null; });
    return backendRef.current;
  }, [createBackend, mode]);

  useEffect(() => () => {
    abortRef.current?.abort();
    void backendRef.current?.then((b) => b.close()).catch(() => undefined);
  }, []);

  const open = useCallback((input: LogInput) => {
    dispatch({ type: 'loading', message: 'Starting the engine…' });
    void (async () => {
      try {
        const b = await backend();
        dispatch({ type: 'loading', message: `Reading ${describeInput(input)}…` });
        dispatch({ type: 'opened', source: await b.open(input) });
      } catch (error) {
        dispatch({ type: 'failed', message: errorMessage(error) });
      }
    })();
  }, [backend]);

  const openDemo = useCallback(() => {
    dispatch({ type: 'loading', message: 'Fetching the Maple Row Market demo log…' });
    demoInput(mode).then(open, (error: unknown) => dispatch({ type: 'failed', message: errorMessage(error) }));
  }, [open, demoInput, mode]);

  const run = useCallback((draft: AuditDraft) => {
    if (status.kind !== 'ready' && status.kind !== 'done' && status.kind !== 'failed') return;
    const source = status.source;
    if (!source) return;
    const controller = new AbortController();
    abortRef.current?.abort();
    abortRef.current = controller;
    dispatch({ type: 'started' });
    void (async () => {
      try {
        const b = await backend();
        const { report, workspace } = await b.run(source, draft, (p) => { if (!controller.signal.aborted) dispatch({ type: 'progress', ...p }); }, controller.signal);
        if (!controller.signal.aborted) dispatch({ type: 'finished', report, workspace });
      } catch (error) {
        dispatch(controller.signal.aborted ? { type: 'cancelled' } : { type: 'failed', message: errorMessage(error) });
      }
    })();
  }, [backend, status]);

  const cancel = useCallback(() => {
    abortRef.current?.abort();
    dispatch({ type: 'cancelled' });
  }, []);

  const reset = useCallback(() => {
    abortRef.current?.abort();
    dispatch({ type: 'reset' });
  }, []);

  const showReport = useCallback((report: Report) => dispatch({ type: 'show-report', report }), []);
  const rows = useCallback(async (source: OpenedSource, request: RowsRequest) => (await backend()).rows(source, request), [backend]);
  const rowCount = useCallback(async (source: OpenedSource, selection: RowSelection) => (await backend()).rowCount(source, selection), [backend]);

  const traits = useMemo(() => traitsOf(mode), [mode]);
  const api = useMemo<EngineApi>(
    () => ({ status, mode, traits, open, openDemo, run, cancel, reset, showReport, rows, rowCount }),
    [status, mode, traits, open, openDemo, run, cancel, reset, showReport, rows, rowCount],
  );
  return <EngineContext.Provider value={api}>{children}</EngineContext.Provider>;
}
