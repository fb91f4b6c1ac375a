import type { EngineHostStatus } from './ipc-contract.ts';

/** The part of Electron's UtilityProcess used here (a fake in tests). */
export interface UtilityProcessLike {
  postMessage(message: unknown): void;
  on(event: 'message', listener: (message: unknown) => void): unknown;
  on(event: 'exit', listener: (code: number) => void): unknown;
  on(event: 'spawn', listener: () => void): unknown;
  kill(): boolean;
}

export interface UtilityForkOptions {
  serviceName: string;
  stdio: 'inherit' | 'pipe' | 'ignore';
  env?: Record<string, string>;
}

export type ForkUtility = (modulePath: string, args: string[], options: UtilityForkOptions) => UtilityProcessLike;

export interface EngineHostOptions<Reply> {
  fork: ForkUtility;
  /** The bundled utility-process entry (dist/electron/engine-host.cjs). */
  entryPath: string;
  /** Validates a message from the host; throws on anything outside the protocol. */
  parseReply: (message: unknown) => Reply;
  onReply: (reply: Reply) => void;
  onStatus: (status: EngineHostStatus) => void;
  /** Called with messages that failed validation; they are dropped, never relayed. */
  onInvalid?: (error: unknown) => void;
  /** Restarts allowed within `restartWindowMs` before giving up. */
  maxRestarts?: number;
  restartWindowMs?: number;
  restartDelayMs?: number;
  now?: () => number;
  schedule?: (callback: () => void, ms: number) => void;
}

export interface EngineHost<Request> {
  send(request: Request): void;
  status(): EngineHostStatus;
  stop(): void;
}

export const ENGINE_SERVICE_NAME = 'Counterweight engine';

/**
 * Runs the engine host as a utility process and restarts it when it dies (a crash in DuckDB, an
 * out-of-memory kill). Requests in flight when it dies are lost; the renderer learns of it from the
 * 'restarting' status and fails them.
 */
export function startEngineHost<Request, Reply>(options: EngineHostOptions<Reply>): EngineHost<Request> {
  const maxRestarts = options.maxRestarts ?? 3;
  const windowMs = options.restartWindowMs ?? 60_000;
  const delayMs = options.restartDelayMs ?? 500;
  const now = options.now ?? Date.now;
  const schedule = options.schedule ?? ((callback, ms) => void setTimeout(callback, ms));
  const restarts: number[] = [];
  let child: UtilityProcessLike | null = null;
  let current: EngineHostStatus = { state: 'starting' };
  let stopped = false;

  const setStatus = (status: EngineHostStatus): void => {
    current = status;
    options.onStatus(status);
  };

  const launch = (): void => {
    const process = options.fork(options.entryPath, [], { serviceName: ENGINE_SERVICE_NAME, stdio: 'inherit' });
    child = process;
    process.on('spawn', () => {
      if (process === child) setStatus({ state: 'ready' });
    });
    process.on('message', (message) => {
      if (process !== child) return;
      let reply: Reply;
      try {
        reply = options.parseReply(message);
      } catch (error) {
        options.onInvalid?.(error);
        return;
      }
      options.onReply(reply);
    });
    process.on('exit', (code) => {
      if (process !== child) return;
      child = null;
      if (stopped) return;
      const t = now();
      while (restarts.length > 0 && (restarts[0] ?? 0) <= t - windowMs) restarts.shift();
      if (restarts.length >= maxRestarts) {
        setStatus({ state: 'failed', message: `The engine stopped (exit code ${code}) ${maxRestarts + 1} times within ${Math.round(windowMs / 1000)} s; restart the app to try again.` });
        return;
      }
      restarts.push(t);
      setStatus({ state: 'restarting', message: `The engine stopped (exit code ${code}) and is restarting; running work was lost.` });
      schedule(() => {
        if (!stopped) launch();
      }, delayMs);
    });
  };

  setStatus({ state: 'starting' });
  launch();

  return {
    send(request) {
      if (child === null) throw new Error(current.message ?? 'The engine is not running.');
      child.postMessage(request);
    },
    status: () => current,
    stop() {
      stopped = true;
      const process = child;
      child = null;
      process?.kill();
    },
  };
}
