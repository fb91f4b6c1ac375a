/** The check registry is the one list of checks: the schema's enum, the verdict's blocking set and the audit order follow it. */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { BLOCKING, CHECKS, CHECK_IDS, REMEDIES_FOR, checksOnPanel } from '../../../app/core/checks/registry.ts';
import { REMEDY_KINDS } from '../../../app/core/remedies/links.ts';
import { runChecks } from '../../../app/core/audit.ts';
import { verdictOf } from '../../../app/core/verdict.ts';
import { SETTINGS } from '../../../app/core/settings.ts';
import type { CheckResult } from '../../../app/core/model/report.ts';
import { contextOf, grid } from './build.ts';

const schema = JSON.parse(readFileSync(new URL('../../../app/core/model/report.schema.json', import.meta.url), 'utf8')) as { definitions: { checkId: { enum: string[] } } };

describe('check registry', () => {
  it('the report schema lists exactly the registered ids, in registry order', () => {
    expect(schema.definitions.checkId.enum).toEqual([...CHECK_IDS]);
  });

  it('ids are unique and every setting a check declares exists', () => {
    expect(new Set(CHECK_IDS).size).toBe(CHECKS.length);
    for (const c of CHECKS) for (const s of c.settings) expect(Object.keys(SETTINGS)).toContain(s);
  });

  it('every check declares at least one known remedy, and REMEDIES_FOR is read from the definitions', () => {
    expect(Object.keys(REMEDIES_FOR)).toEqual([...CHECK_IDS]);
    for (const c of CHECKS) {
      expect(c.remedies.length).toBeGreaterThan(0);
      for (const k of c.remedies) expect(REMEDY_KINDS).toContain(k);
      expect(REMEDIES_FOR[c.id]).toEqual(c.remedies);
    }
  });

  it('every check belongs to one panel and the panels cover every check', () => {
    const panels = (['data', 'weights', 'drift', 'estimates'] as const).flatMap((p) => checksOnPanel(p));
    expect([...panels].sort()).toEqual([...CHECK_IDS].sort());
  });

  it('blocking: the checks that decide whether an estimate can be trusted, and duplicates above their share', () => {
    expect([...BLOCKING].sort()).toEqual(['balance.weights', 'identity.duplicates', 'propensity.exploration', 'propensity.range', 'reward.validity', 'schema.roles', 'support.target', 'weights.ess', 'weights.tail']);
  });

  it('runChecks returns one result per check in registry order, stamped with its id and title, reading only declared settings', () => {
    const ctx = contextOf(grid([['x'], ['y']], ['a', 'b'], () => 0.5, () => 200, 1), { days: 2, duplicates: { ids: 0, rowsInDuplicates: 0, extraRows: 0, maxCopies: 0, exampleIds: [] } });
    const results = runChecks(ctx);
    expect(results.map((r) => r.id)).toEqual([...CHECK_IDS]);
    results.forEach((r, i) => {
      const def = CHECKS[i]!;
      expect(r.title).toBe(def.title);
      for (const s of r.settings_used) expect(def.settings).toContain(s);
    });
  });

  it('a check that throws is status `error`, and the verdict blocks when it is a blocking check', () => {
    const ctx = contextOf(grid([['x']], ['a', 'b'], () => 0.5, () => 200, 1));
    // an audit context whose target list throws when read: every check that reads targets errors
    const broken = { ...ctx, get targets(): never { throw new Error('targets unavailable'); } };
    const results = runChecks(broken);
    const ess = results.find((r) => r.id === 'weights.ess')!;
    expect(ess.status).toBe('error');
    expect(ess.summary).toContain('targets unavailable');
    expect(verdictOf(results).verdict).toBe('not-supported');
    expect(verdictOf(results).reasons.find((r) => r.check === 'weights.ess')?.status).toBe('error');
  });

  it('an erroring non-blocking check gives caveats, never a pass', () => {
    const pass = (id: CheckResult['id']): CheckResult => ({ id, title: id, status: 'pass', summary: '', metrics: {}, findings: [], settings_used: [] });
    const results = CHECK_IDS.map((id) => (id === 'drift.reward' ? { ...pass(id), status: 'error' as const } : pass(id)));
    expect(verdictOf(results).verdict).toBe('supported-with-caveats');
    expect(verdictOf(results.map((r) => (r.id === 'weights.tail' ? { ...r, status: 'error' as const } : r))).verdict).toBe('not-supported');
  });
});
