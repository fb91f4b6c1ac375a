/**
 * Engine host as a Node child process: `node --import tsx app/engine/host/child-main.ts`, talking to its
 * parent over the IPC channel (process.send / 'message').
 */
import { createNativeEngine } from '../native.ts';
import { serveEngine } from './server.ts';

if (!process.send) {
  process.stderr.write('The engine host must be started with an IPC channel (child_process.fork).\n');
  process.exit(2);
}

// Query messages come from another process: they may read the registered logs and nothing else.
const engine = await createNativeEngine({ restrictFileAccess: true });
serveEngine(
  {
    send: (message) => { process.send?.(message); },
    onMessage: (listener) => { process.on('message', listener); },
  },
  engine,
  { onClosed: () => process.disconnect() },
);
// The parent going away (crash, kill) leaves nothing to serve.
process.on('disconnect', () => {
  void engine.close().finally(() => process.exit(0));
});
