import type { BrowserWindow, BrowserWindowConstructorOptions } from 'electron';

const DEFAULT_WIDTH = 1280;
const DEFAULT_HEIGHT = 800;

/** Secure defaults for the one application window; the preload is the renderer's only bridge. */
export function windowOptions(preloadPath: string): BrowserWindowConstructorOptions {
  return {
    width: DEFAULT_WIDTH,
    height: DEFAULT_HEIGHT,
    minWidth: 900,
    minHeight: 600,
    title: 'Counterweight',
    show: false,
    backgroundColor: '#ffffff',
    webPreferences: {
      preload: preloadPath,
      contextIsolation: true,
      sandbox: true,
      nodeIntegration: false,
      nodeIntegrationInWorker: false,
      nodeIntegrationInSubFrames: false,
      webSecurity: true,
      allowRunningInsecureContent: false,
      webviewTag: false,
      spellcheck: false,
      navigateOnDragDrop: false,
      safeDialogs: true,
    },
  };
}

export interface WindowElectron {
  BrowserWindow: new (options: BrowserWindowConstructorOptions) => BrowserWindow;
}

/** Creates the window hidden and shows it once the first paint is ready, so no blank frame flashes. */
export function createMainWindow(electron: WindowElectron, preloadPath: string): BrowserWindow {
  const window = new electron.BrowserWindow(windowOptions(preloadPath));
  window.once('ready-to-show', () => window.show());
  return window;
}
