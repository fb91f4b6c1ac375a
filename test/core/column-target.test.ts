/**
 * A target given as a column of per-row probabilities must give the same numbers as the same policy
 * given as a table: w = q/p either way (DEVELOPERS.md, "The scans of one audit"). The column is made by joining the v9 table onto
 * the demo log.
 */
import { afterAll, beforeAll, expect, it } from 'vitest';
import { runAudit } from '../../app/core/audit.ts';
import type { Report } from '../../app/core/model/report.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { FIXED_NOW, SAMPLE, V9, v9Target } from './audit-helpers.ts';
import { expectRelativelyClose } from './expect-close.ts';

let engine: Engine;
let byTable: Report;
let byColumn: Report;

beforeAll(async () => {
  engine = await createNativeEngine();
  await engine.query(`CREATE TABLE log_q AS SELECT d.*, v.probability AS target_prob FROM read_parquet('${SAMPLE}maple-row-demo.parquet') d
    LEFT JOIN read_csv('${V9}') v ON d.region = v.region AND d.device = v.device AND d.tenure = v.tenure AND d.promotion = v.promotion`);
  const common = { relation: 'log_q', input: { files: [], format: 'table' }, engine: 'native', now: FIXED_NOW } as const;
  byTable = await runAudit((q) => engine.query(q), { ...common, targets: [v9Target()] });
  byColumn = await runAudit((q) => engine.query(q), { ...common, targets: [{ spec: 'column:target_prob' }] });
});
afterAll(async () => engine?.close());

it('gives the table target\'s ESS, maximum weight, k̂, IPS and SNIPS', () => {
  const t = byTable.targets[0]!;
  const c = byColumn.targets[0]!;
  expectRelativelyClose({
    ess: [c.ess, t.ess], max_weight: [c.max_weight, t.max_weight], khat: [c.khat, t.khat],
    ips: [c.ips.value, t.ips.value], ips_se: [c.ips.se, t.ips.se], snips: [c.snips.value, t.snips.value], snips_se: [c.snips.se, t.snips.se],
  }, 1e-9);
  expect(byColumn.roles.target_propensity).toBe('target_prob');
});

it('says why a column target has no doubly robust estimate', () => {
  expect(byColumn.targets[0]!.dr.value).toBeNull();
  const f = byColumn.checks.find((x) => x.id === 'estimate.preview')!.findings[0]!;
  expect(f.message).toMatch(/target column gives q only for the logged action/);
});
