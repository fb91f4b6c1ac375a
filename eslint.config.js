import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import globals from 'globals';

// Layer rules (DEVELOPERS.md, "Layer rules"): app/core and app/charts are pure. They may not reach Node, the DOM,
// Electron, an engine, Arrow, React or ECharts; tsconfig in app/core removes the DOM and Node types too.
const pureLayerBans = {
  paths: ['fs', 'path', 'os', 'crypto', 'child_process', 'worker_threads', 'stream', 'url', 'util', 'http', 'https', 'net', 'zlib',
    'electron', 'apache-arrow', 'react', 'react-dom', 'echarts', 'ws'].map((name) => ({ name, message: 'app/core and app/charts are pure: no platform, engine or UI imports.' })),
  patterns: [
    { group: ['node:*'], message: 'app/core and app/charts are pure: no Node imports.' },
    { group: ['@duckdb/*', 'apache-arrow/*', 'echarts/*', 'react/*', 'react-dom/*', 'electron/*'], message: 'app/core and app/charts are pure: no engine or UI imports.' },
    { group: ['**/engine/**', '**/engine', '**/report/**', '**/cli/**', '**/main/**', '**/preload/**', '**/renderer/**'], message: 'app/core and app/charts may import only app/core.' },
  ],
};

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
);
