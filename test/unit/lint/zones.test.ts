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

const cases: { zone: string; file: string; code: string; fires: string | null }[] = [
  // app/core and app/charts: pure
  { zone: 'core is pure', file: 'app/core/fixture.ts', code: "import { readFileSync as x } from 'node:fs';", fires: 'no-restricted-imports' },
  { zone: 'core is pure', file: 'app/charts/fixture.ts', code: "import * as x from 'echarts';", fires: 'no-restricted-imports' },
  { zone: 'core is pure', file: 'app/core/fixture.ts', code: "import { ident as x } from './sql/quote.ts';", fires: null },
  // app/engine common: neither Node nor browser
  { zone: 'engine common: no Node-only module', file: 'app/engine/host/fixture.ts', code: "import { createNativeEngine as x } from '../native.ts';", fires: 'no-restricted-imports' },
  { zone: 'engine common: no Node-only module', file: 'app/engine/host/fixture.ts', code: "import { startHost as x } from './server.ts';", fires: 'no-restricted-imports' },
  { zone: 'engine common: no Node builtin', file: 'app/engine/fixture.ts', code: "import { readFile as x } from 'node:fs/promises';", fires: 'no-restricted-imports' },
  { zone: 'engine common: no Node global', file: 'app/engine/fixture.ts', code: 'const x = process.env;', fires: 'no-restricted-globals' },
  { zone: 'engine common: no browser-only module', file: 'app/engine/fixture.ts', code: "import { createWasmBrowserEngine as x } from './wasm-browser.ts';", fires: 'no-restricted-imports' },
  { zone: 'engine common: no asset URL', file: 'app/engine/parquet/fixture.ts', code: "import x from 'parquet-wasm/esm/parquet_wasm_bg.wasm?url';", fires: 'no-restricted-imports' },
  { zone: 'engine common: no DOM', file: 'app/engine/fixture.ts', code: 'const x = document.title;', fires: 'no-restricted-globals' },
  { zone: 'engine common', file: 'app/engine/fixture.ts', code: "import { EngineError as x } from './types.ts';", fires: null },
  // app/engine Node-only modules
  { zone: 'engine Node-only: no browser-only module', file: 'app/engine/native.ts', code: "import { createWasmBrowserEngine as x } from './wasm-browser.ts';", fires: 'no-restricted-imports' },
  { zone: 'engine Node-only: no DuckDB-Wasm browser build', file: 'app/engine/wasm-node.ts', code: "import * as x from '@duckdb/duckdb-wasm';", fires: 'no-restricted-imports' },
  { zone: 'engine Node-only', file: 'app/engine/wasm-node.ts', code: "import * as x from '@duckdb/duckdb-wasm/blocking';", fires: null },
  // browser code: the browser-only engine modules and the renderer
  { zone: 'browser: no Node builtin', file: 'app/engine/wasm-browser.ts', code: "import { readFileSync as x } from 'fs';", fires: 'no-restricted-imports' },
  { zone: 'browser: no Node-only module', file: 'renderer/panels/Fixture.tsx', code: "import { createNativeEngine as x } from '../../app/engine/native.ts';", fires: 'no-restricted-imports' },
  { zone: 'browser: no Node-only module', file: 'renderer/engine/fixture.ts', code: "import { sha256File as x } from '../../app/report/fingerprint.ts';", fires: 'no-restricted-imports' },
  { zone: 'browser: no Node global', file: 'renderer/state/fixture.ts', code: 'const x = Buffer.from("a");', fires: 'no-restricted-globals' },
  // app/report: no DOM, no React
  { zone: 'report: no React', file: 'app/report/fixture.ts', code: "import { useState as x } from 'react';", fires: 'no-restricted-imports' },
  { zone: 'report: no DOM', file: 'app/report/html.ts', code: 'const x = window.location;', fires: 'no-restricted-globals' },
  { zone: 'report', file: 'app/report/fixture.ts', code: "import { escapeHtml as x } from './escape.ts';", fires: null },
  // renderer views: no SQL, no statistics
  { zone: 'views: no SQL builder', file: 'renderer/panels/Fixture.tsx', code: "import { drillSql as x } from '../../app/core/scan/drill.ts';", fires: '@typescript-eslint/no-restricted-imports' },
  { zone: 'views: no SQL quoting', file: 'renderer/components/Fixture.tsx', code: "import { literal as x } from '../../app/core/sql/quote.ts';", fires: '@typescript-eslint/no-restricted-imports' },
  { zone: 'views: no cube SQL', file: 'renderer/panels/fixture.ts', code: "import { regroupSql as x } from '../../app/core/cube/regroup-sql.ts';", fires: '@typescript-eslint/no-restricted-imports' },
  { zone: 'views: no statistics', file: 'renderer/screens/Fixture.tsx', code: "import { kishEss as x } from '../../app/core/stats/ess.ts';", fires: '@typescript-eslint/no-restricted-imports' },
  { zone: 'views: types build nothing', file: 'renderer/components/Fixture.tsx', code: "import type { DrillCursor as x } from '../../app/core/scan/drill.ts';", fires: null },
  { zone: 'views: the report model and charts', file: 'renderer/panels/Fixture.tsx', code: "import { chartFor as x } from '../../app/charts/index.ts';", fires: null },
  { zone: 'the page\'s engine layer builds SQL', file: 'renderer/engine/fixture.ts', code: "import { drillSql as x } from '../../app/core/scan/drill.ts';", fires: null },
];

describe('lint zones', () => {
  it.each(cases)('$zone: $file with `$code`', async ({ file, code, fires }) => {
    const rules = await broken(file, code);
    if (fires === null) expect(rules).toEqual([]);
    else expect(rules).toContain(fires);
  });
});
