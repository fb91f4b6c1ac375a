import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import globals from 'globals';
import { builtinModules } from 'node:module';

// Layer rules (DEVELOPERS.md, "Layer rules"), enforced here rather than by review.

const nodeBuiltins = builtinModules.filter((name) => !name.startsWith('_'));

// app/core and app/charts are pure. They may not reach Node, the DOM, Electron, an engine, Arrow, React or ECharts;
// tsconfig in app/core removes the DOM and Node types too.
const pureLayerBans = {
  paths: [...nodeBuiltins, 'electron', 'apache-arrow', 'react', 'react-dom', 'echarts', 'ws'].map((name) => ({ name, message: 'app/core and app/charts are pure: no platform, engine or UI imports.' })),
  patterns: [
    { group: ['node:*'], message: 'app/core and app/charts are pure: no Node imports.' },
    { group: ['@duckdb/*', 'apache-arrow/*', 'echarts/*', 'react/*', 'react-dom/*', 'electron/*'], message: 'app/core and app/charts are pure: no engine or UI imports.' },
    { group: ['**/engine/**', '**/engine', '**/report/**', '**/cli/**', '**/main/**', '**/preload/**', '**/renderer/**'], message: 'app/core and app/charts may import only app/core.' },
  ],
};

// Modules that run only in Node, and modules that run only in a browser page. Every other file of app/engine and
// app/report is common: it runs in both, so it imports neither kind. A new Node-only or browser-only module is
// listed here, or lint fails on its first platform import.
export const NODE_ONLY = [
  'app/engine/native.ts', 'app/engine/memory.ts', 'app/engine/wasm-node.ts', 'app/engine/node-paths.ts', 'app/engine/file-grants.ts', 'app/engine/file-kind.ts',
  'app/engine/clickhouse.ts', 'app/engine/clickhouse-http.ts', 'app/engine/clickhouse-address.ts', 'app/engine/convert/duckdb-values.ts',
  'app/engine/host/server.ts', 'app/engine/host/spawn.ts', 'app/engine/host/child-main.ts', 'app/engine/host/fingerprint.ts',
  'app/report/fingerprint.ts', 'app/report/json.ts', 'app/report/signoff.ts', 'app/report/trusted-keys.ts',
];
export const BROWSER_ONLY = ['app/engine/wasm-browser.ts', 'app/engine/wasm-browser-bundles.ts', 'app/engine/parquet/browser-module.ts', 'app/engine/parquet/decode.worker.ts'];

const escape = (text) => text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
/**
 * Any relative specifier that can name the module: its file name, after any tail of its folders
 * ("./server.ts", "../host/server.ts", "../../app/engine/host/server.ts"). A file of a zone that imports another
 * module with the same name fails too, which is loud rather than silent; rename one of them.
 */
function moduleSpecifiers(files) {
  return files.map((file) => {
    const parts = file.split('/');
    const name = escape(parts.pop());
    const folders = parts.reduceRight((tail, folder) => `(${escape(folder)}/${tail})?`, '');
    return `(^|/)${folders}${name}$`;
  });
}
const specifierPattern = (files, message) => ({ regex: moduleSpecifiers(files).join('|'), message });

const nodeImports = (zone) => ({
  paths: [...nodeBuiltins, '@duckdb/node-api', 'ws', 'electron'].map((name) => ({ name, message: `${zone}: no Node or Electron imports.` })),
  patterns: [
    { group: ['node:*'], message: `${zone}: no Node imports.` },
    specifierPattern(NODE_ONLY, `${zone}: this module runs only in Node (NODE_ONLY in eslint.config.js).`),
  ],
});
const browserImports = (zone) => ({
  paths: ['@duckdb/duckdb-wasm', 'parquet-wasm/esm', 'react', 'react-dom', 'react-dom/client'].map((name) => ({ name, message: `${zone}: no browser-only imports (DuckDB-Wasm's browser build, parquet-wasm's web build, React).` })),
  patterns: [
    { regex: '\\?url$', message: `${zone}: asset URLs exist only in the Vite bundle.` },
    specifierPattern(BROWSER_ONLY, `${zone}: this module runs only in a browser page (BROWSER_ONLY in eslint.config.js).`),
  ],
});
const both = (a, b) => ({ paths: [...a.paths, ...b.paths], patterns: [...a.patterns, ...b.patterns] });
const nodeGlobals = (zone) => ['process', 'Buffer', 'require', '__dirname', '__filename', 'global'].map((name) => ({ name, message: `${zone}: ${name} is Node-only.` }));
const domGlobals = (zone) => ['window', 'document', 'navigator', 'localStorage', 'sessionStorage', 'HTMLElement', 'Element', 'location'].map((name) => ({ name, message: `${zone}: ${name} belongs to the DOM.` }));

// Views (the renderer's screens, panels, components, state) render the report model: no SQL, no statistics. They
// import the model, app/charts and view helpers; the page's engine layer (renderer/engine/) builds what an engine
// runs. Types may still be imported: they build nothing.
const viewBans = {
  patterns: [
    { group: ['**/core/scan/*', '**/core/sql/*', '**/core/cube/regroup-sql.ts', '**/core/cube/measures.ts', '**/core/audit.ts'], allowTypeImports: true, message: 'Views build no SQL: ask the page\'s engine layer (renderer/engine/).' },
    { group: ['**/core/stats/*'], allowTypeImports: true, message: 'Views compute no statistics: render the report model.' },
  ],
};

const viewFiles = ['renderer/**/*.ts', 'renderer/**/*.tsx'];
const pageEngineFiles = ['renderer/engine/**', 'renderer/engine-harness.ts'];
const nodeToolFiles = ['renderer/dev/**'];

export default tseslint.config(
  { ignores: ['**/*.tmp.*', 'node_modules/**', 'dist/**', '**/dist/**', 'test-results/**', 'playwright-report/**', 'bench/cache/**', 'bench/scratch/**', 'bench/results.json', 'test/corpus/files/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      '@typescript-eslint/consistent-type-imports': 'error',
    },
  },
  {
    files: ['app/core/**/*.ts', 'app/charts/**/*.ts'],
    languageOptions: { globals: {} },
    rules: { 'no-restricted-imports': ['error', pureLayerBans] },
  },
  // app/engine and app/report, common part: runs in Node and in a page.
  {
    files: ['app/engine/**/*.ts', 'app/report/**/*.ts'],
    ignores: [...NODE_ONLY, ...BROWSER_ONLY],
    rules: {
      'no-restricted-imports': ['error', both(nodeImports('common engine and report code'), browserImports('common engine and report code'))],
      'no-restricted-globals': ['error', ...nodeGlobals('common engine and report code'), ...domGlobals('common engine and report code')],
    },
  },
  // Node-only modules of app/engine and app/report.
  {
    files: NODE_ONLY,
    rules: {
      'no-restricted-imports': ['error', browserImports('Node-only code')],
      'no-restricted-globals': ['error', ...domGlobals('Node-only code')],
    },
  },
  // Browser code: the browser-only engine modules and the renderer (not its Vite plugin, which runs in Node).
  {
    files: [...BROWSER_ONLY, ...viewFiles],
    ignores: nodeToolFiles,
    rules: {
      'no-restricted-imports': ['error', nodeImports('browser code')],
      'no-restricted-globals': ['error', ...nodeGlobals('browser code')],
    },
  },
  {
    files: viewFiles,
    ignores: [...pageEngineFiles, ...nodeToolFiles],
    rules: { '@typescript-eslint/no-restricted-imports': ['error', viewBans] },
  },
);
