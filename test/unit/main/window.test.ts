import { describe, expect, it } from 'vitest';
import { createMainWindow, windowOptions } from '../../../app/main/window.ts';

describe('windowOptions', () => {
  const options = windowOptions('/app/dist/electron/preload.cjs');
  const prefs = options.webPreferences ?? {};

  it('isolates the renderer: contextIsolation and sandbox on, Node integration off everywhere', () => {
    expect(prefs.contextIsolation).toBe(true);
    expect(prefs.sandbox).toBe(true);
    expect(prefs.nodeIntegration).toBe(false);
    expect(prefs.nodeIntegrationInWorker).toBe(false);
    expect(prefs.nodeIntegrationInSubFrames).toBe(false);
  });

  it('keeps web security on and refuses insecure content and <webview>', () => {
    expect(prefs.webSecurity).toBe(true);
    expect(prefs.allowRunningInsecureContent).toBe(false);
    expect(prefs.webviewTag).toBe(false);
  });

  it('uses the given preload and a 1280x800 default size', () => {
    expect(prefs.preload).toBe('/app/dist/electron/preload.cjs');
    expect([options.width, options.height]).toEqual([1280, 800]);
  });
});

describe('createMainWindow', () => {
  it('constructs the window from windowOptions and shows it once ready', () => {
    const seen: unknown[] = [];
    const listeners = new Map<string, () => void>();
    let shown = false;
    class FakeWindow {
      constructor(options: unknown) {
        seen.push(options);
      }
      once(event: string, listener: () => void) {
        listeners.set(event, listener);
        return this;
      }
      show() {
        shown = true;
      }
    }
    createMainWindow({ BrowserWindow: FakeWindow as never }, '/p.cjs');
    expect(seen).toEqual([windowOptions('/p.cjs')]);
    expect(shown).toBe(false);
    listeners.get('ready-to-show')?.();
    expect(shown).toBe(true);
  });
});
