// The closed set of messages between the renderer (through the preload) and the main process.
// Shared by app/main and app/preload; type-only: the arguments' schemas are in ipc-schema.ts.
import type { HostReply, HostRequest } from '../engine/host/messages.ts';
import type { InvokeArgsOf, PrintRequest, SaveReportRequest } from './ipc-schema.ts';

export type { PrintRequest, SaveReportRequest };

export type ReportFormat = 'json' | 'html' | 'pdf';

/** The log to open when the window first loads. */
export interface LaunchLog {
  paths: string[];
  source: 'argument' | 'demo';
}

export interface RecentLog {
  paths: string[];
  /** ISO 8601. */
  openedAt: string;
}

export interface TargetTableFile {
  path: string;
  text: string;
}

/** A saved report chosen for the audit history: its bare file name (the history's label) and its text. */
export interface ReportFileText {
  name: string;
  text: string;
}

export type EngineHostState = 'starting' | 'ready' | 'restarting' | 'failed';

export interface EngineHostStatus {
  state: EngineHostState;
  /** Plain words for the user when the host stopped. */
  message?: string;
}

/** Renderer -> main requests (ipcRenderer.invoke), each with its arguments and result. */
export interface InvokeChannels {
  'launch:log': { args: InvokeArgsOf<'launch:log'>; result: LaunchLog };
  'log:choose': { args: InvokeArgsOf<'log:choose'>; result: string[] | null };
  'recent:list': { args: InvokeArgsOf<'recent:list'>; result: RecentLog[] };
  'recent:add': { args: InvokeArgsOf<'recent:add'>; result: RecentLog[] };
  'target-table:choose': { args: InvokeArgsOf<'target-table:choose'>; result: TargetTableFile | null };
  'reports:choose': { args: InvokeArgsOf<'reports:choose'>; result: ReportFileText[] | null };
  'report:save': { args: InvokeArgsOf<'report:save'>; result: string | null };
  'report:print-pdf': { args: InvokeArgsOf<'report:print-pdf'>; result: string | null };
  'engine:send': { args: InvokeArgsOf<'engine:send'>; result: void };
  'engine:status': { args: InvokeArgsOf<'engine:status'>; result: EngineHostStatus };
}

/** Main -> renderer events (webContents.send). */
export interface EventChannels {
  'engine:message': HostReply;
  'engine:status-changed': EngineHostStatus;
}

export type InvokeChannel = keyof InvokeChannels;
export type EventChannel = keyof EventChannels;
export type InvokeArgs<C extends InvokeChannel> = InvokeChannels[C]['args'];
export type InvokeResult<C extends InvokeChannel> = InvokeChannels[C]['result'];

/** What the preload exposes as `window.counterweight`. */
export interface CounterweightApi {
  readonly kind: 'desktop';
  launchLog(): Promise<LaunchLog>;
  /** Shows the open dialog; the chosen paths become readable by the engine host. */
  chooseLog(): Promise<string[] | null>;
  recentLogs(): Promise<RecentLog[]>;
  addRecentLog(paths: string[]): Promise<RecentLog[]>;
  chooseTargetTable(): Promise<TargetTableFile | null>;
  /** Shows the open dialog for saved report JSON files and returns their names and texts. */
  chooseReports(): Promise<ReportFileText[] | null>;
  saveReport(request: SaveReportRequest): Promise<string | null>;
  printReportToPdf(request?: PrintRequest): Promise<string | null>;
  engine: {
    send(message: HostRequest): Promise<void>;
    status(): Promise<EngineHostStatus>;
    /** Returns a function that removes the listener. */
    onMessage(listener: (message: HostReply) => void): () => void;
    onStatus(listener: (status: EngineHostStatus) => void): () => void;
  };
}
