// Start-up of the Electron main process: the one place the modules are wired together.
import { app, BrowserWindow, dialog, ipcMain, protocol, session, utilityProcess } from 'electron';
import type { HostReply } from '../engine/host/messages.ts';
import { APP_ENTRY_URL, APP_ORIGIN, registerAppScheme, serveAppScheme } from './app-protocol.ts';
import { startEngineRelay } from './engine-relay.ts';
import { type DialogApi, parseLaunchArgs, PathGrants, recentStore, userArgs } from './file-access.ts';
import { createHandlers } from './handlers.ts';
import { registerIpc, sendEvent } from './ipc.ts';
import { desktopPaths } from './paths.ts';
import { applyCsp, contentSecurityPolicy, denyPermissions, guardWebContents, isAllowedNavigation } from './security.ts';
import { createMainWindow } from './window.ts';

const paths = desktopPaths(__dirname);
const launch = parseLaunchArgs(userArgs(process.argv, app.isPackaged), { cwd: process.cwd(), demoLog: paths.demoLog });
const grants = new PathGrants();
grants.grant(launch.paths);

app.setName('Counterweight');
app.enableSandbox();
registerAppScheme(protocol);

const primary = app.requestSingleInstanceLock();
app.on('web-contents-created', (_event, contents) => guardWebContents(contents, APP_ORIGIN));

async function start(): Promise<void> {
  const policy = contentSecurityPolicy();
  serveAppScheme(protocol, paths.rendererRoot, policy);
  applyCsp(session.defaultSession, policy);
  denyPermissions(session.defaultSession);

  const recent = recentStore(app.getPath('userData'));
  for (const entry of await recent.load()) grants.grant(entry.paths);

  const window = createMainWindow({ BrowserWindow }, paths.preload);
  const contents = window.webContents;
  const dialogs: DialogApi = {
    showOpenDialog: (options) => dialog.showOpenDialog(window, options),
    showSaveDialog: (options) => dialog.showSaveDialog(window, options),
  };
  const replyToRenderer = (reply: HostReply): void => sendEvent(contents, 'engine:message', reply);
  const engine = startEngineRelay({
    fork: (modulePath, args, options) => utilityProcess.fork(modulePath, args, options),
    entryPath: paths.engineHostEntry,
    onReply: replyToRenderer,
    onStatus: (status) => sendEvent(contents, 'engine:status-changed', status),
    onInvalid: (error) => console.error('Dropped a malformed engine host message:', error),
  });
  registerIpc(ipcMain, createHandlers({ launch, grants, recent, dialog: dialogs, engine, contents, replyToRenderer }), (event) => {
    const frame = event.senderFrame;
    return event.sender === contents && frame !== null && isAllowedNavigation(frame.url, APP_ORIGIN);
  });

  app.on('second-instance', () => {
    if (window.isMinimized()) window.restore();
    window.focus();
  });
  app.on('window-all-closed', () => {
    engine.stop();
    app.quit();
  });
  await window.loadURL(APP_ENTRY_URL);
}

if (!primary) {
  app.quit();
} else {
  app.whenReady().then(start).catch((error: unknown) => {
    console.error(error);
    app.exit(1);
  });
}
