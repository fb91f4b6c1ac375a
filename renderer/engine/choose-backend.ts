import type { HostEngine } from '../../app/engine/host/client.ts';
import type { WasmArrowTables, WasmBrowserEngine } from '../../app/engine/wasm-browser.ts';
import type { CounterweightApi } from '../../app/main/ipc-contract.ts';
import type { AuditBackend, LogInput } from './backend.ts';
import { createEngineBackend } from './engine-backend.ts';
import { detectMode, traitsOf, type PageMode } from './mode.ts';

declare global {
  interface Window {
    readonly counterweight?: CounterweightApi;
  }
}

export const DEMO_LOG_URL = '/sample-data/maple-row-demo.csv';
/** Relative to the host's working directory (the checkout the local server was started from). */
export const DEMO_LOG_HOST_PATH = 'sample-data/maple-row-demo.csv';

export function pageMode(): PageMode {
  return detectMode(window.location.search, window.counterweight?.kind === 'desktop');
}

/** Starts the engine this page was opened for. */
export async function createBackend(mode: PageMode): Promise<AuditBackend> {
  const { readsParquet } = traitsOf(mode);
  switch (mode.kind) {
    case 'web': {
      const { createWasmBrowserEngine } = await import('../../app/engine/wasm-browser.ts');
      const engine = await createWasmBrowserEngine();
      // The worker that scans the log also holds the cube.
      return createEngineBackend(engine, { readsParquet, cubeTables: async () => engine.tables });
    }
    case 'hosted': {
      const { connectHostEngine } = await import('./ws-transport.ts');
      return hostBackend(await connectHostEngine(mode.host, mode.token), readsParquet);
    }
    case 'desktop': {
      const { desktopHostEngine } = await import('./desktop-transport.ts');
      return hostBackend(await desktopHostEngine(), readsParquet);
    }
  }
}

/**
 * The host scans the log and runs the audit (DEVELOPERS.md, "The desktop data path"); the page keeps a DuckDB-Wasm worker of its
 * own, started on the first audit, for SQL over the cube the host sends back.
 */
function hostBackend(engine: HostEngine, readsParquet: boolean): AuditBackend {
  let worker: Promise<WasmBrowserEngine> | null = null;
  const cubeTables = async (): Promise<WasmArrowTables> => {
    worker ??= import('../../app/engine/wasm-browser.ts').then((m) => m.createWasmBrowserEngine());
    worker.catch(() => { worker = null; });
    return (await worker).tables;
  };
  const backend = createEngineBackend(engine, { readsParquet, cubeTables, hostAudit: (request, onProgress, signal) => engine.audit(request, onProgress, signal) });
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
      return { kind: 'paths', paths: [DEMO_LOG_HOST_PATH] };
    case 'desktop': {
      const launch = await window.counterweight?.launchLog();
      if (launch?.source !== 'demo') throw new Error('This window was started with a log of its own; start Counterweight without a log to get the demo.');
      return { kind: 'paths', paths: launch.paths };
    }
  }
}
