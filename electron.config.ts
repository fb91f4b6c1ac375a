import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { build, type BuildOptions } from 'esbuild';

/** Desktop build: main, preload and the engine-host utility process bundled by esbuild; the renderer by vite. */
export const ROOT = path.dirname(fileURLToPath(import.meta.url));
export const ELECTRON_OUT_DIR = 'dist/electron';
export const RENDERER_OUT_DIR = 'dist/renderer';
export const MAIN_BUNDLE = `${ELECTRON_OUT_DIR}/main.cjs`;
export const DEMO_LOG = 'sample-data/maple-row-demo.parquet';

export const packaging = {
  appId: 'app.counterweight.desktop',
  productName: 'Counterweight',
  copyright: 'Counterweight contributors',
  main: MAIN_BUNDLE,
  files: [`${ELECTRON_OUT_DIR}/**`, `${RENDERER_OUT_DIR}/**`, 'sample-data/*.parquet', 'sample-data/*.csv', 'package.json'],
  // DuckDB's native addon cannot load from inside an asar archive.
  asarUnpack: ['node_modules/@duckdb/**'],
} as const;

/** Electron 45 runs Node 22. */
const NODE_TARGET = 'node22';

export function bundleOptions(root: string = ROOT, outDir: string = path.join(root, ELECTRON_OUT_DIR)): BuildOptions[] {
  const shared: BuildOptions = {
    bundle: true,
    format: 'cjs',
    sourcemap: true,
    logLevel: 'warning',
    absWorkingDir: root,
    outExtension: { '.js': '.cjs' },
    outdir: outDir,
  };
  return [
    {
      ...shared,
      // Main needs no native package; its one library (zod, for the IPC and host messages) is inlined.
      entryPoints: { main: 'app/main/index.ts' },
      platform: 'node',
      target: NODE_TARGET,
      external: ['electron'],
    },
    {
      ...shared,
      // Node packages stay in node_modules; @duckdb/node-api ships a native addon that cannot be bundled.
      entryPoints: { 'engine-host': 'app/main/host-utility-entry.ts' },
      platform: 'node',
      target: NODE_TARGET,
      packages: 'external',
      external: ['electron'],
    },
    {
      ...shared,
      // A sandboxed preload can require only 'electron', so everything else is inlined.
      entryPoints: { preload: 'app/preload/index.ts' },
      platform: 'browser',
      target: 'chrome140',
      external: ['electron'],
    },
  ];
}

export async function buildElectron(root: string = ROOT, outDir?: string): Promise<void> {
  await Promise.all(bundleOptions(root, outDir).map((options) => build(options)));
}

/** Builds the renderer with the repository's vite.config.ts into dist/renderer. */
export async function buildRenderer(root: string = ROOT): Promise<void> {
  const { build: viteBuild } = await import('vite');
  await viteBuild({ root: path.join(root, 'renderer'), configFile: path.join(root, 'vite.config.ts'), logLevel: 'warn', build: { outDir: path.join(root, RENDERER_OUT_DIR), emptyOutDir: true } });
}
