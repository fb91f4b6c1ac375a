import type { HostReply, HostRequest } from '../engine/host/messages.ts';
import { chooseLog, chooseReports, chooseTargetTable, type DialogApi, type PathGrants, PathNotGrantedError, type RecentStore, saveReport } from './file-access.ts';
import { admitRequest } from './host-messages.ts';
import type { EngineHost } from './engine-host.ts';
import type { IpcHandlers } from './ipc.ts';
import type { LaunchLog } from './ipc-contract.ts';
import { type PrintableContents, printReportToPdf } from './print.ts';

export interface HandlerDeps {
  launch: LaunchLog;
  grants: PathGrants;
  recent: RecentStore;
  dialog: DialogApi;
  engine: EngineHost<HostRequest>;
  /** Delivers a reply to the renderer as if the engine host had sent it. */
  replyToRenderer: (reply: HostReply) => void;
  /** The window's contents, printed by print-to-PDF. */
  contents: PrintableContents;
}

/**
 * What each channel does; every path that reaches the engine host was opened by the user. A request
 * that is well formed but cannot go to the host (a path not opened, the host down) is answered with a
 * protocol error reply, so the renderer's client fails that request rather than waiting for ever.
 */
export function createHandlers<Event>(deps: HandlerDeps): IpcHandlers<Event> {
  const { grants } = deps;
  return {
    'launch:log': () => deps.launch,
    'log:choose': async () => {
      const paths = await chooseLog(deps.dialog);
      if (paths !== null) grants.grant(paths);
      return paths;
    },
    'recent:list': () => deps.recent.load(),
    'recent:add': (_event, paths) => {
      grants.assertGranted(paths);
      return deps.recent.add(paths);
    },
    'target-table:choose': () => chooseTargetTable(deps.dialog),
    'reports:choose': () => chooseReports(deps.dialog),
    'report:save': (_event, request) => saveReport(deps.dialog, request, grants),
    'report:print-pdf': (_event, request) => printReportToPdf(deps.contents, deps.dialog, request, grants),
    'engine:send': (_event, message) => {
      try {
        deps.engine.send(admitRequest(message, grants));
      } catch (error) {
        const code = error instanceof PathNotGrantedError ? 'io' : 'closed';
        deps.replyToRenderer({ kind: 'error', id: message.id, code, message: error instanceof Error ? error.message : String(error) });
      }
    },
    'engine:status': () => deps.engine.status(),
  };
}
