/**
 * A log is profiled once: an audit given the inspection made when the log was opened (inspectRoles, as the
 * app and the engine host keep it) reads the log fewer times and makes the same report as an audit that
 * profiles the log itself — the same queries recorded, the same counts of source scans, every number equal.
 */
import { describe, expect, it } from 'vitest';
import { inspectRoles, runAudit, type AuditRequest } from '../../app/core/audit.ts';
import type { Report } from '../../app/core/model/report.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { FIXED_NOW, SAMPLE, v9Target } from './audit-helpers.ts';

const DEMO = `${SAMPLE}maple-row-demo.parquet`;
const withoutTimes = (r: Report) => ({ ...r, run: { ...r.run, seconds: 0 } });

describe('an audit given the open-time inspection', () => {
  it.each([
    ['roles suggested (the evidence is needed)', {}],
    ['roles given by hand (no evidence is read)', { roles: { action: 'promotion', propensity: 'propensity', reward: 'ordered', decision_id: 'decision_id', time: 'logged_at' } }],
  ])('reads the log less and reports the same: %s', async (_name, extra: Partial<AuditRequest>) => {
    const engine = await createNativeEngine({ threads: 2 });
    try {
      const src = await engine.register({ kind: 'path', paths: [DEMO] });
      const run = (sql: string) => engine.query(sql);
      const request: AuditRequest = { relation: src.relation, input: { files: [], format: src.format }, engine: 'native', now: FIXED_NOW, targets: [v9Target()], ...extra };
      const s0 = engine.sourceScans;
      const fresh = await runAudit(run, request);
      const freshScans = engine.sourceScans - s0;
      const inspection = await inspectRoles(run, src.relation);
      const s1 = engine.sourceScans;
      const reused = await runAudit(run, { ...request, inspection });
      const reusedScans = engine.sourceScans - s1;
      expect(withoutTimes(reused)).toEqual(withoutTimes(fresh));
      // the profile's two reads (first rows, every row) are not made again, nor the evidence's
      const skipped = inspection.queries.profile.filter((q) => q.scans_source).length + (extra.roles ? 0 : inspection.queries.evidence.filter((q) => q.scans_source).length);
      expect(skipped).toBeGreaterThanOrEqual(2);
      expect(reusedScans).toBe(freshScans - skipped);
    } finally {
      await engine.close();
    }
  }, 120_000);
});
