// Entry of the engine-host utility process (bundled to dist/electron/engine-host.cjs).
import { serveOverParentPort } from './utility-host.ts';

const port = process.parentPort;
if (!port) {
  process.stderr.write('The engine host must be started as an Electron utility process.\n');
  process.exit(2);
}
serveOverParentPort(port).catch((error: unknown) => {
  process.stderr.write(`The engine host could not start: ${error instanceof Error ? error.message : String(error)}\n`);
  process.exit(1);
});
