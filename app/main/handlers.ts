import type { HostRequest } from '../engine/host/protocol.ts';
import { chooseLog, chooseTargetTable, type DialogApi, type PathGrants, type RecentStore, saveReport } from './file-access.ts';
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
  /** The window's contents, printed by print-to-PDF. */
  contents: PrintableContents;
}

/** What each channel does; every path that reaches the engine host was opened by the user. */
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
    'report:save': (_event, request) => saveReport(deps.dialog, request, grants),
    'report:print-pdf': (_event, request) => printReportToPdf(deps.contents, deps.dialog, request, grants),
    'engine:send': (_event, message) => deps.engine.send(admitRequest(message, grants)),
    'engine:status': () => deps.engine.status(),
  };
}
