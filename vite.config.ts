import { fileURLToPath } from 'node:url';
import react from '@vitejs/plugin-react';
import { defineConfig } from 'vite';
import { sampleDataPlugin } from './renderer/dev/sample-data-plugin.ts';

const page = (name: string): string => fileURLToPath(new URL(`./renderer/${name}`, import.meta.url));

export default defineConfig({
  root: 'renderer',
  // Under the browser tests, DuckDB-Wasm's many source-map warnings would bury the test output.
  ...(process.env.CW_NO_HMR ? { logLevel: 'error' as const } : {}),
  plugins: [react(), sampleDataPlugin(fileURLToPath(new URL('./sample-data', import.meta.url)))],
  server: {
    host: '127.0.0.1',
    port: 5179,
    strictPort: true,
    // The renderer imports app/ and node_modules/ from the repository root.
    fs: { allow: ['..'] },
    // Browser tests set CW_NO_HMR: a file saved during a run must not reload the page under test.
    ...(process.env.CW_NO_HMR ? { hmr: false, watch: null } : {}),
  },
  // DuckDB-Wasm ships its own worker and .wasm files; pre-bundling would break their asset URLs.
  optimizeDeps: { exclude: ['@duckdb/duckdb-wasm'] },
  build: {
    outDir: '../dist/renderer',
    emptyOutDir: true,
    // Only the app ships. The engine harness (renderer/engine-harness.html) is a test page: the Vite dev server
    // serves it to the browser tests and the benchmark, and the production build leaves it out.
    rollupOptions: {
      input: { index: page('index.html') },
    },
  },
});
