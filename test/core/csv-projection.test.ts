/**
 * A CSV is parsed once for the audit's row-level statements (issue 14 item 4): given the engine's projection
 * (Engine.project, a temporary table of the role and segment columns), the cube, duplicates, tails and clip
 * rows read that table instead of parsing the file again, and the report is the one an audit over the file
 * makes: every check, number, target and remedy equal; only the recorded queries name the table.
 */
import { describe, expect, it } from 'vitest';
import { projectedColumns, runAudit, type AuditRequest } from '../../app/core/audit.ts';
import type { Report } from '../../app/core/model/report.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { createWasmNodeEngine } from '../../app/engine/wasm-node.ts';
import type { Engine } from '../../app/engine/types.ts';
import { FIXED_NOW, SAMPLE, v9Target } from './audit-helpers.ts';

const DEMO_CSV = `${SAMPLE}maple-row-demo.csv`;
const body = (r: Report) => ({ ...r, queries: [], run: null });

async function both(engine: Engine): Promise<{ plain: Report; projected: Report; plainScans: number; projectedScans: number }> {
  const src = await engine.register({ kind: 'path', paths: [DEMO_CSV] });
  const run = (sql: string) => engine.query(sql);
  const request: AuditRequest = { relation: src.relation, input: { files: [], format: src.format }, engine: engine.kind, now: FIXED_NOW, targets: [v9Target()] };
  const s0 = engine.sourceScans;
  const plain = await runAudit(run, request);
  const s1 = engine.sourceScans;
  const project = engine.project?.bind(engine);
  if (!project) throw new Error(`${engine.kind} has no projection`);
  const projected = await runAudit(run, { ...request, project: (columns) => project(src.relation, columns) });
  return { plain, projected, plainScans: s1 - s0, projectedScans: engine.sourceScans - s1 };
}

describe('an audit of a CSV over its projection', () => {
  it.each([
    ['native', () => createNativeEngine({ threads: 2 })],
    ['DuckDB-Wasm in Node', () => createWasmNodeEngine()],
  ])('%s: the same report, the file parsed once for the row-level statements', async (_name, open: () => Promise<Engine>) => {
    const engine = await open();
    try {
      const { plain, projected, plainScans, projectedScans } = await both(engine);
      expect(body(projected)).toEqual(body(plain));
      const rowLevel = (r: Report) => r.queries.filter((q) => /^(cube|duplicates|tail |clip )/.test(q.name));
      expect(rowLevel(plain).every((q) => q.scans_source)).toBe(true);
      expect(rowLevel(projected).length).toBe(rowLevel(plain).length);
      // the row-level statements read the table, which one recorded statement made from the log
      expect(rowLevel(projected).every((q) => !q.scans_source && q.sql.includes('"src_1_columns"') && !q.sql.includes('"src_1"'))).toBe(true);
      const made = projected.queries.filter((q) => q.name === 'projection');
      expect(made).toHaveLength(1);
      expect(made[0]?.sql).toMatch(/^CREATE TEMP TABLE "src_1_columns" AS SELECT .* FROM "src_1"$/);
      expect(projectedScans).toBe(plainScans - rowLevel(plain).length + 1);
      expect(projected.run.source_scans).toBe(projectedScans);
      // released once the row-level statements are done
      await expect(engine.query('SELECT count(*) FROM "src_1_columns"')).rejects.toThrow(/src_1_columns/);
    } finally {
      await engine.close();
    }
  }, 600_000);

  it('holds each role and segment column once, only columns of the log', () => {
    const roles = { decision_id: 'id', time: null, action: 'a', propensity: 'p', reward: 'r', policy_version: 'v', target_propensity: 'missing', propensity_vector: null, action_set_size: null, segments: ['s', 'a', 'v'] };
    expect(projectedColumns(roles, ['id', 'a', 'p', 'r', 'v', 's', 'other'])).toEqual(['id', 'a', 'p', 'r', 'v', 's']);
  });
});
