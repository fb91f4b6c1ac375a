import { contextBridge, ipcRenderer, type IpcRendererEvent } from 'electron';
import type {
  CounterweightApi,
  EventChannel,
  EventChannels,
  InvokeArgs,
  InvokeChannel,
  InvokeResult,
} from '../main/ipc-contract.ts';

function invoke<C extends InvokeChannel>(channel: C, ...args: InvokeArgs<C>): Promise<InvokeResult<C>> {
  return ipcRenderer.invoke(channel, ...args) as Promise<InvokeResult<C>>;
}

/** The renderer never sees the IpcRendererEvent (it carries the sender), only the payload. */
function subscribe<C extends EventChannel>(channel: C, listener: (payload: EventChannels[C]) => void): () => void {
  const wrapped = (_event: IpcRendererEvent, payload: EventChannels[C]): void => listener(payload);
  ipcRenderer.on(channel, wrapped);
  return () => {
    ipcRenderer.removeListener(channel, wrapped);
  };
}

const api: CounterweightApi = {
  kind: 'desktop',
  launchLog: () => invoke('launch:log'),
  chooseLog: () => invoke('log:choose'),
  recentLogs: () => invoke('recent:list'),
  addRecentLog: (paths) => invoke('recent:add', paths),
  chooseTargetTable: () => invoke('target-table:choose'),
  chooseReports: () => invoke('reports:choose'),
  saveReport: (request) => invoke('report:save', request),
  printReportToPdf: (request = {}) => invoke('report:print-pdf', request),
  engine: {
    send: (message) => invoke('engine:send', message),
    status: () => invoke('engine:status'),
    onMessage: (listener) => subscribe('engine:message', listener),
    onStatus: (listener) => subscribe('engine:status-changed', listener),
  },
};

contextBridge.exposeInMainWorld('counterweight', api);
