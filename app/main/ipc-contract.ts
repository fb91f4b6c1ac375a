// The closed set of messages between the renderer (through the preload) and the main process.
// Shared by app/main and app/preload; type-only apart from the channel names.
import type { HostReply, HostRequest } from '../engine/host/protocol.ts';

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

export interface SaveReportRequest {
  format: 'json' | 'html';
  contents: string;
  suggestedName?: string;
}

export interface PrintRequest {
  suggestedName?: string;
}

export type EngineHostState = 'starting' | 'ready' | 'restarting' | 'failed';

export interface EngineHostStatus {
  state: EngineHostState;
  /** Plain words for the user when the host stopped. */
  message?: string;
}

/** Renderer -> main requests (ipcRenderer.invoke), each with its arguments and result. */
export interface InvokeChannels {
  'launch:log': { args: []; result: LaunchLog };
  'log:choose': { args: []; result: string[] | null };
  'recent:list': { args: []; result: RecentLog[] };
  'recent:add': { args: [paths: string[]]; result: RecentLog[] };
  'target-table:choose': { args: []; result: TargetTableFile | null };
  'report:save': { args: [request: SaveReportRequest]; result: string | null };
  'report:print-pdf': { args: [request: PrintRequest]; result: string | null };
  'engine:send': { args: [message: HostRequest]; result: void };
  'engine:status': { args: []; result: EngineHostStatus };
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

export const INVOKE_CHANNELS = [
  'launch:log',
  'log:choose',
  'recent:list',
  'recent:add',
  'target-table:choose',
  'report:save',
  'report:print-pdf',
  'engine:send',
  'engine:status',
] as const satisfies readonly InvokeChannel[];

type UnlistedChannel = Exclude<InvokeChannel, (typeof INVOKE_CHANNELS)[number]>;
/** Does not compile while a channel of InvokeChannels is missing from INVOKE_CHANNELS. */
export const INVOKE_CHANNELS_COMPLETE: [UnlistedChannel] extends [never] ? true : UnlistedChannel = true;

export const EVENT_CHANNELS = ['engine:message', 'engine:status-changed'] as const satisfies readonly EventChannel[];

/** What the preload exposes as `window.counterweight`. */
export interface CounterweightApi {
  readonly kind: 'desktop';
  launchLog(): Promise<LaunchLog>;
  /** Shows the open dialog; the chosen paths become readable by the engine host. */
  chooseLog(): Promise<string[] | null>;
  recentLogs(): Promise<RecentLog[]>;
  addRecentLog(paths: string[]): Promise<RecentLog[]>;
  chooseTargetTable(): Promise<TargetTableFile | null>;
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
