import type { HostEngine } from '../../app/engine/host/client.ts';
import type { WasmArrowTables, WasmBrowserEngine } from '../../app/engine/wasm-browser.ts';
import type { CounterweightApi } from '../../app/main/ipc-contract.ts';
import type { AuditBackend, LogInput } from './backend.ts';
import { createEngineBackend } from './engine-backend.ts';
import { createHostBackend } from './host-backend.ts';
import { detectMode, type PageMode } from './mode.ts';

declare global {
  interface Window {
    readonly counterweight?: CounterweightApi;
  }
}

const DEMO_LOG_URL = '/sample-data/maple-row-demo.csv';
/** By its bare name: the local server always looks in the demo folder too (scripts/web/main.ts). */
const DEMO_LOG_HOST_NAME = 'maple-row-demo.csv';

let mode: PageMode | null = null;

/**
 * What the page was opened for. A hosted page finds its socket and token in the URL fragment (never sent
 * to a server, never in a Referer), which is then removed from the address bar so the token stays out
 * of the history and of restored sessions; a reload therefore needs the address the server printed.
 */
export function pageMode(): PageMode {
  if (mode) return mode;
  mode = detectMode(window.location.hash, window.counterweight?.kind === 'desktop');
  // A screen's name (#/overview) stays: it is how a reload finds the screen again (App.tsx).
  if (window.location.hash && !window.location.hash.startsWith('#/')) window.history.replaceState(null, '', `${window.location.pathname}${window.location.search}`);
  return mode;
}

/** Starts the engine this page was opened for. */
export async function createBackend(mode: PageMode): Promise<AuditBackend> {
  switch (mode.kind) {
    case 'web': {
      const { createWasmBrowserEngine } = await import('../../app/engine/wasm-browser.ts');
      const engine = await createWasmBrowserEngine();
      // The worker that scans the log also holds the cube.
      return createEngineBackend(engine, { cubeTables: async () => engine.tables });
    }
    case 'hosted': {
      const { connectHostEngine } = await import('./ws-transport.ts');
      return hostBackend(await connectHostEngine(mode.host, mode.token));
    }
    case 'desktop': {
      const { desktopHostEngine } = await import('./desktop-transport.ts');
      return hostBackend(await desktopHostEngine());
    }
  }
}

/**
 * The host scans the log and runs the audit; the page keeps a DuckDB-Wasm worker of its
 * own, started on the first audit, for SQL over the cube the host sends back.
 */
function hostBackend(engine: HostEngine): AuditBackend {
  let worker: Promise<WasmBrowserEngine> | null = null;
  const cubeTables = async (): Promise<WasmArrowTables> => {
    worker ??= import('../../app/engine/wasm-browser.ts').then((m) => m.createWasmBrowserEngine());
    worker.catch(() => { worker = null; });
    return (await worker).tables;
  };
  const backend = createHostBackend(engine, { cubeTables });
  return {
    ...backend,
    open(input) {
      // The worker compiles DuckDB-Wasm while the user maps roles, not while the audit runs.
      cubeTables().catch(() => undefined);
      return backend.open(input);
    },
    async close() {
      await backend.close();
      await worker?.then((w) => w.close()).catch(() => undefined);
    },
  };
}

export async function demoInput(mode: PageMode): Promise<LogInput> {
  switch (mode.kind) {
    case 'web': {
      const response = await fetch(DEMO_LOG_URL);
      if (!response.ok) throw new Error(`The demo log is not available: ${DEMO_LOG_URL} answered ${response.status} ${response.statusText}.`);
      return { kind: 'files', files: [new File([await response.blob()], 'maple-row-demo.csv', { type: 'text/csv' })] };
    }
    case 'hosted':
      return { kind: 'paths', paths: [DEMO_LOG_HOST_NAME] };
    case 'desktop': {
      const launch = await window.counterweight?.launchLog();
      if (launch?.source !== 'demo') throw new Error('This window was started with a log of its own; start Counterweight without a log to get the demo.');
      return { kind: 'paths', paths: launch.paths };
    }
  }
}
