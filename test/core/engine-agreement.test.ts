/**
 * The whole report (minus report.run, the timings) is the same on native DuckDB and on DuckDB-Wasm in
 * Node for the same log and targets: numbers to 1e-12 relative. CSV through both engines' CSV readers;
 * Parquet through native DuckDB's reader and, on Wasm, through Arrow row group by row group (app/engine/parquet/).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Report } from '../../app/core/model/report.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { createWasmNodeEngine } from '../../app/engine/wasm-node.ts';
import type { Engine } from '../../app/engine/types.ts';
import { auditFile, firstDifference, SAMPLE, v9Target } from './audit-helpers.ts';

for (const format of ['csv', 'parquet'] as const) {
  describe(`maple-row-demo.${format}`, () => {
    let native: Engine;
    let wasm: Engine;
    let a: Report;
    let b: Report;

    beforeAll(async () => {
      native = await createNativeEngine();
      wasm = await createWasmNodeEngine();
      const file = `${SAMPLE}maple-row-demo.${format}`;
      [a, b] = await Promise.all([auditFile(native, file, { targets: [v9Target()] }), auditFile(wasm, file, { targets: [v9Target()] })]);
    }, 180_000);
    afterAll(async () => {
      await native?.close();
      await wasm?.close();
    });

    it('native and Wasm reports agree to 1e-12 relative, apart from run timings', () => {
      const strip = (r: Report) => ({ ...r, run: null, queries: r.queries.map((q) => q.name) });
      expect(firstDifference(strip(a), strip(b), 1e-12)).toBeNull();
      expect(a.verdict).toBe('not-supported');
    });

    it('both engines count the same scans', () => {
      expect(a.run.source_scans).toBe(b.run.source_scans);
    });
  });
}
