/**
 * The layer zones of eslint.config.js (DEVELOPERS.md, "Layer rules"), each shown firing on a one-line
 * fixture linted as if it were a file of that zone, and staying quiet on what the zone allows.
 */
import { ESLint } from 'eslint';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('../../..', import.meta.url));
const eslint = new ESLint({ cwd: root });

/** The zone rules a fixture breaks, by rule id. */
async function broken(file: string, code: string): Promise<string[]> {
  const [result] = await eslint.lintText(`${code}\nexport const used = [x];\n`, { filePath: `${root}/${file}` });
  const zoneRules = ['no-restricted-imports', '@typescript-eslint/no-restricted-imports', 'no-restricted-globals'];
  return (result?.messages ?? []).filter((m) => zoneRules.includes(m.ruleId ?? '')).map((m) => m.ruleId as string);
}

const IMPORTS = 'no-restricted-imports';
const VIEW_IMPORTS = '@typescript-eslint/no-restricted-imports';
const GLOBALS = 'no-restricted-globals';

/**
 * A zone as seen from one fixture file: the modules it refuses (reported by `rule`), the globals it refuses,
 * and lines it allows.
 */
interface Zone { zone: string; file: string; refuses?: string[]; rule?: string; globals?: string[]; allows?: string[] }

const zones: Zone[] = [
  // app/core and app/charts: pure
  { zone: 'core is pure', file: 'app/core/fixture.ts', refuses: ['node:fs'], allows: ["import { ident as x } from './sql/quote.ts';"] },
  { zone: 'core is pure', file: 'app/charts/fixture.ts', refuses: ['echarts'] },
  // app/engine common: neither Node nor browser
  { zone: 'engine common: no Node-only module', file: 'app/engine/host/fixture.ts', refuses: ['../native.ts', './server.ts'] },
  { zone: 'engine common: no Node builtin, Node global, browser-only module or DOM', file: 'app/engine/fixture.ts', refuses: ['node:fs/promises', './wasm-browser.ts'], globals: ['process.env', 'document.title'], allows: ["import { EngineError as x } from './types.ts';"] },
  { zone: 'engine common: no asset URL', file: 'app/engine/parquet/fixture.ts', refuses: ['parquet-wasm/esm/parquet_wasm_bg.wasm?url'] },
  // app/engine Node-only modules
  { zone: 'engine Node-only: no browser-only module', file: 'app/engine/native.ts', refuses: ['./wasm-browser.ts'] },
  { zone: 'engine Node-only: no DuckDB-Wasm browser build', file: 'app/engine/wasm-node.ts', refuses: ['@duckdb/duckdb-wasm'], allows: ["import * as x from '@duckdb/duckdb-wasm/blocking';"] },
  // browser code: the browser-only engine modules and the renderer
  { zone: 'browser: no Node builtin', file: 'app/engine/wasm-browser.ts', refuses: ['fs'] },
  { zone: 'browser: no Node-only module', file: 'renderer/engine/fixture.ts', refuses: ['../../app/report/fingerprint.ts'], allows: ["import { drillSql as x } from '../../app/core/scan/drill.ts';"] },
  { zone: 'browser: no Node global', file: 'renderer/state/fixture.ts', globals: ['Buffer.from("a")'] },
  // app/report: no DOM, no React
  { zone: 'report: no React', file: 'app/report/fixture.ts', refuses: ['react'], allows: ["import { escapeHtml as x } from './escape.ts';"] },
  { zone: 'report: no DOM', file: 'app/report/html.ts', globals: ['window.location'] },
  // renderer views: no SQL, no statistics, no Node-only module; the report model and charts are fine
  { zone: 'browser: no Node-only module', file: 'renderer/panels/Fixture.tsx', refuses: ['../../app/engine/native.ts'], allows: ["import { chartFor as x } from '../../app/charts/index.ts';"] },
  { zone: 'views: no SQL builder', file: 'renderer/panels/Fixture.tsx', refuses: ['../../app/core/scan/drill.ts'], rule: VIEW_IMPORTS },
  { zone: 'views: no SQL quoting; types build nothing', file: 'renderer/components/Fixture.tsx', refuses: ['../../app/core/sql/quote.ts'], rule: VIEW_IMPORTS, allows: ["import type { DrillCursor as x } from '../../app/core/scan/drill.ts';"] },
  { zone: 'views: no cube SQL', file: 'renderer/panels/fixture.ts', refuses: ['../../app/core/cube/regroup-sql.ts'], rule: VIEW_IMPORTS },
  { zone: 'views: no statistics', file: 'renderer/screens/Fixture.tsx', refuses: ['../../app/core/stats/ess.ts'], rule: VIEW_IMPORTS },
];

/** Each refused module or global a one-line fixture of its own that must fire, each allowed line one that must not. */
const cases = zones.flatMap(({ zone, file, refuses = [], rule = IMPORTS, globals = [], allows = [] }) => [
  ...refuses.map((m) => ({ zone, file, code: `import * as x from '${m}';`, fires: rule as string | null })),
  ...globals.map((g) => ({ zone, file, code: `const x = ${g};`, fires: GLOBALS as string | null })),
  ...allows.map((code) => ({ zone, file, code, fires: null })),
]);

describe('lint zones', () => {
  it.each(cases)('$zone: $file with `$code`', async ({ file, code, fires }) => {
    const rules = await broken(file, code);
    if (fires === null) expect(rules).toEqual([]);
    else expect(rules).toContain(fires);
  });
});
