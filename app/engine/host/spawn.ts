/** The engine host as a Node child process (hosted web mode's sessions, tests, the benchmark); Node only. */
import { fork } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { createHostEngine, type HostEngine } from './client.ts';
import type { Transport } from './transport.ts';

const CHILD_MAIN = fileURLToPath(new URL('./child-main.ts', import.meta.url));

export interface HostProcess extends Transport {
  readonly pid: number | undefined;
  /** Asks the child to go (it closes its engine), and kills it if it has not gone within 3 s. */
  stop(): Promise<void>;
}

/**
 * Starts app/engine/host/child-main.ts. The IPC channel uses structured-clone serialisation, so the
 * cube's bytes arrive as a Uint8Array rather than as JSON.
 */
export function forkHostProcess(options: { env?: NodeJS.ProcessEnv } = {}): HostProcess {
  const child = fork(CHILD_MAIN, [], { execArgv: ['--import', 'tsx'], stdio: ['ignore', 'inherit', 'inherit', 'ipc'], serialization: 'advanced', env: options.env ?? process.env });
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  return {
    pid: child.pid,
    send: (message) => { if (child.connected) child.send(message); },
    onMessage: (listener) => { child.on('message', listener); },
    onClose: (listener) => {
      child.once('exit', (code, signal) => listener(signal ? `signal ${signal}` : `exit code ${code}`));
      child.once('error', (error) => listener(error.message));
    },
    async stop() {
      if (child.exitCode !== null || child.signalCode !== null) return;
      const timer = setTimeout(() => child.kill('SIGKILL'), 3000);
      if (child.connected) child.disconnect();
      await exited;
      clearTimeout(timer);
    },
  };
}

/** Starts the engine host as a Node child process and returns a client talking to it. */
export function spawnHostChild(options: { env?: NodeJS.ProcessEnv } = {}): HostEngine & { readonly pid: number | undefined } {
  const child = forkHostProcess(options);
  const engine = createHostEngine(child, { onClosed: () => child.stop() });
  return Object.assign(engine, { pid: child.pid });
}
