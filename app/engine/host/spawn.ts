/** Launches the engine host as a Node child process (tests, the benchmark); Node only. */
import { fork } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { createHostEngine, type HostEngine } from './client.ts';
import type { Transport } from './transport.ts';

const CHILD_MAIN = fileURLToPath(new URL('./child-main.ts', import.meta.url));

/** Starts the engine host as a Node child process and returns an Engine talking to it. */
export function spawnHostChild(options: { env?: NodeJS.ProcessEnv } = {}): HostEngine {
  const child = fork(CHILD_MAIN, [], { execArgv: ['--import', 'tsx'], stdio: ['ignore', 'inherit', 'inherit', 'ipc'], env: options.env ?? process.env });
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  const transport: Transport = {
    send: (message) => { if (child.connected) child.send(message); },
    onMessage: (listener) => { child.on('message', listener); },
    onClose: (listener) => {
      child.once('exit', (code, signal) => listener(signal ? `signal ${signal}` : `exit code ${code}`));
      child.once('error', (error) => listener(error.message));
    },
  };
  return createHostEngine(transport, {
    onClosed: async () => {
      const timer = setTimeout(() => child.kill('SIGKILL'), 3000);
      if (child.connected) child.disconnect();
      await exited;
      clearTimeout(timer);
    },
  });
}
