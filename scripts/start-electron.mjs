// Builds the desktop app and starts Electron on the demo log (or on the paths given after `--`).
// `--build-only` builds without starting.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { register } from 'tsx/esm/api';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const require = createRequire(import.meta.url);
const args = process.argv.slice(2);
const buildOnly = args.includes('--build-only');
const logArgs = args.filter((a) => a !== '--build-only' && a !== '--');

function fail(message) {
  process.stderr.write(`${message}\n`);
  process.exit(1);
}

/**
 * The Electron binary's path, downloading it first when absent (the electron package does this on a
 * user's machine). The download's own output and stack trace are kept back; a plain message replaces them.
 */
function electronBinary() {
  let packageDir;
  try {
    packageDir = path.dirname(require.resolve('electron/package.json'));
  } catch {
    return { error: 'The electron package is not installed; run `npm install` first.' };
  }
  const pathFile = path.join(packageDir, 'path.txt');
  const present = () =>
    process.env.ELECTRON_OVERRIDE_DIST_PATH !== undefined ||
    (existsSync(pathFile) && existsSync(path.join(packageDir, 'dist', readFileSync(pathFile, 'utf8'))));
  if (!present()) {
    process.stdout.write('The Electron binary is not downloaded yet; downloading it once...\n');
    const result = spawnSync(process.execPath, [path.join(packageDir, 'install.js')], { cwd: packageDir, stdio: 'pipe', timeout: 10 * 60_000 });
    if (result.status !== 0 || !present()) {
      return {
        error:
          'Could not download the Electron binary (this needs an internet connection once).\n' +
          'Without it the desktop app cannot start; `npm run web` serves the same app in a browser, and\n' +
          '`npm run audit -- <log>` runs the audit in a terminal.',
      };
    }
  }
  return { path: require('electron') };
}

const binary = buildOnly ? null : electronBinary();
if (binary?.error) fail(binary.error);

register();
const config = await import('../electron.config.ts');
try {
  await config.buildElectron(root);
  await config.buildRenderer(root);
} catch (error) {
  fail(`The desktop build failed: ${error instanceof Error ? error.message : String(error)}`);
}
if (buildOnly) {
  process.stdout.write(`Built ${config.ELECTRON_OUT_DIR}/ and ${config.RENDERER_OUT_DIR}/.\n`);
  process.exit(0);
}

const logs = logArgs.length > 0 ? logArgs.map((p) => path.resolve(p)) : [path.join(root, config.DEMO_LOG)];
const child = spawn(binary.path, [path.join(root, config.MAIN_BUNDLE), ...logs], { cwd: root, stdio: 'inherit' });
child.on('error', (error) => fail(`Electron could not start: ${error.message}`));
for (const signal of ['SIGINT', 'SIGTERM']) process.on(signal, () => child.kill(signal));
child.on('exit', (code, signal) => process.exit(code ?? (signal ? 1 : 0)));
