/**
 * Role inference from the data on generated logs named each their own way (test/fixtures/role-logs.ts):
 * the action is the column for which weight balance (1/n) Σ 1{A=a}/p ≈ 1 holds (Horvitz & Thompson 1952,
 * E[1{A=a}/p] = 1 under the logging policy), the decision id is the nearly unique column.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inspectRoles } from '../../app/core/audit.ts';
import { balanceFit, FIT_TOLERANCE } from '../../app/core/roles/evidence.ts';
import { resolveRoles, validateRoles } from '../../app/core/roles/roles.ts';
import { actionEvidenceSql, parseActionEvidence } from '../../app/core/scan/role-evidence.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { AD_SPEC, BOOKING_SPEC, roleLog, TUTOR_SPEC, type RoleLogSpec } from '../fixtures/role-logs.ts';

let engine: Engine;
const dir = mkdtempSync(join(tmpdir(), 'cw-roles-'));
beforeAll(async () => {
  engine = await createNativeEngine();
});
afterAll(async () => engine?.close());

async function inspect(spec: RoleLogSpec, rows: number, seed: number) {
  const path = join(dir, `${spec.action.name}-${seed}.csv`);
  writeFileSync(path, roleLog(spec, rows, seed).csv);
  const src = await engine.register({ kind: 'path', paths: [path] });
  return { ...(await inspectRoles((q) => engine.query(q), src.relation)), relation: src.relation };
}

const roleOf = (s: { role: string; column: string }[], role: string) => s.filter((x) => x.role === role).map((x) => x.column);
/** The columns suggested for each of the given roles. */
const rolesOf = (s: { role: string; column: string }[], expected: Record<string, string[]>) => Object.fromEntries(Object.keys(expected).map((role) => [role, roleOf(s, role)]));

describe('balanceFit (the identity on hand-made groups)', () => {
  it('is exactly 1 for every action when each row carries its true probability', () => {
    // two actions at p = 0.5 and 0.25/0.75 rows: B(a) = (1/n) Σ 1{A=a}/p computed by hand below
    const groups = [
      { value: 'x', rows: 1, valid: [1], sumInv: [1 / 0.25], sumInv2: [1 / 0.0625] },
      { value: 'y', rows: 3, valid: [3], sumInv: [3 / 0.75], sumInv2: [3 / 0.5625] },
    ];
    const f = balanceFit('a', 'p', groups, 0);
    expect(f.values.map((v) => v.b)).toEqual([1, 1]);
    expect(f.maxDeviation).toBe(0);
    // 4 rows are fewer than FIT_MIN_ROWS: the identity fits but is not evidence enough
    expect(f.holds).toBe(false);
  });
  it('for a segment, B is the share times the number of actions offered (here 0.5 × 2 = 1 and 0.5 × 4 = 2)', () => {
    const groups = [
      { value: 's1', rows: 500, valid: [500], sumInv: [500 * 2], sumInv2: [500 * 4] },
      { value: 's2', rows: 500, valid: [500], sumInv: [500 * 4], sumInv2: [500 * 16] },
    ];
    const f = balanceFit('seg', 'p', groups, 0);
    expect(f.values.map((v) => v.b)).toEqual([1, 2]);
    expect(f.maxDeviation).toBe(1);
    expect(f.holds).toBe(false);
  });
});

describe('role inference on generated logs', () => {
  it('the booking log: the offer column named like an id is the action, the opaque event id is the id', async () => {
    const r = await inspect(BOOKING_SPEC, 20_000, 11);
    const expected = { action: ['offer_id'], decision_id: ['evt'], propensity: ['shown_chance'], reward: ['tapped'], time: ['happened'], policy_version: ['policy_tag'], segments: ['city_zone', 'guest_kind', 'platform'] };
    expect(rolesOf(r.suggestions, expected)).toEqual(expected);
    const action = r.suggestions.find((s) => s.role === 'action');
    expect(action?.reason).toMatch(/^weight balance holds: \(1\/n\) Σ 1\{A=a\}\/p is within 0\.\d\d of 1 for all 5 values/);
    // the Columns screen's words: one or two plain sentences with the numbers, no formula (the reason is the detail)
    expect(action?.plain).toMatch(/^Weighted by 1\/propensity, each of its 5 values adds up to the number of rows \(within \d+%\), as an action's values must\.$/);
    expect(action?.plain).not.toMatch(/Σ|1\{/);
    expect(action?.confidence).toBeGreaterThanOrEqual(0.9);
    const fit = r.evidence.fits.find((f) => f.column === 'offer_id');
    expect(fit?.maxDeviation).toBeLessThan(FIT_TOLERANCE);
    // every other categorical column is far from balance: B = share × number of actions offered (all 5 everywhere)
    for (const f of r.evidence.fits.filter((x) => x.column !== 'offer_id')) expect(f.holds).toBe(false);
    const platform = r.evidence.fits.find((f) => f.column === 'platform');
    expect(platform?.values.every((v) => Math.abs(v.b - (5 * v.rows) / platform.rows) < 0.15)).toBe(true);
  });

  it('the ad log: integer arms with no action-like name, a named integer key', async () => {
    const r = await inspect(AD_SPEC, 20_000, 12);
    const expected = { action: ['creative'], decision_id: ['request_key'], propensity: ['pscore'], time: ['event_time_ms'], reward: ['converted'] };
    expect(rolesOf(r.suggestions, expected)).toEqual(expected);
  });

  it('the tutoring log: a segment with as many equally likely values as actions also balances, so the evidence is called weak', async () => {
    const r = await inspect(TUTOR_SPEC, 20_000, 13);
    const action = r.suggestions.find((s) => s.role === 'action');
    // grade_band: 4 values at 1/4 each × 4 actions offered everywhere = 1, the coincidence the identity cannot rule out
    expect(r.evidence.fits.filter((f) => f.holds).map((f) => f.column).sort()).toEqual(['grade_band', 'hint_style']);
    expect(action?.reason).toMatch(/also holds for/);
    expect(action?.plain).toMatch(/^Weighted by 1\/propensity, each of its 4 values adds up to the number of rows \(within \d+%\), as an action's values must\. It also holds for '(grade_band|hint_style)', so the evidence is weak: the (closest fit|column name) decided\.$/);
    expect(action?.confidence).toBeLessThan(0.5);
    expect(roleOf(r.suggestions, 'decision_id')).toEqual(['session_ref']);
  });

  it('warns when the chosen action does not balance and refuses an id far from unique', async () => {
    const r = await inspect(BOOKING_SPEC, 5_000, 14);
    const profile = r.profile;
    const roles = resolveRoles(profile, { action: 'city_zone', decision_id: 'offer_id', segments: ['guest_kind'] }, r.evidence);
    const problems = validateRoles(profile, roles, r.evidence);
    const action = problems.find((p) => p.role === 'action');
    expect(action?.severity).toBe('warn');
    expect(action?.message).toMatch(/weight balance does not hold for action column 'city_zone'.*it holds for 'offer_id'/);
    const id = problems.find((p) => p.role === 'decision_id');
    expect(id?.severity).toBe('fail');
    expect(id?.message).toMatch(/far from unique: 5 distinct values in 5,000 rows/);
  });

  it('leaves mis-logged propensities on the right action column to the balance check: it warns only where another column balances', async () => {
    const r = await inspect(BOOKING_SPEC, 5_000, 15);
    const roles = resolveRoles(r.profile, { action: 'offer_id', propensity: 'shown_chance' }, r.evidence);
    // hand-made groups, 1,000 rows with p = 1/2: B('a') = 500·2/1000 = 1; for 'b' the logged p is 1/3.6, B('b') = 500·3.6/1000 = 1.8
    const group = (value: string, inv: number) => ({ value, rows: 500, valid: [500], sumInv: [500 * inv], sumInv2: [500 * inv * inv] });
    const misLogged = balanceFit('offer_id', 'shown_chance', [group('a', 2), group('b', 3.6)], 0);
    expect(misLogged.values.map((v) => v.b)).toEqual([1, 1.8]);
    const segment = balanceFit('city_zone', 'shown_chance', [group('north', 4), group('south', 2)], 0);
    const balanced = balanceFit('guest_kind', 'shown_chance', [group('x', 2), group('y', 2)], 0);
    expect([misLogged.holds, segment.holds, balanced.holds]).toEqual([false, false, true]);
    const actionProblems = (fits: ReturnType<typeof balanceFit>[]) => validateRoles(r.profile, roles, { rowsRead: 1_000, fits }).filter((p) => p.role === 'action');
    // no other column balances: the action column is right and its propensities are wrong, which balance.weights reports
    expect(actionProblems([misLogged, segment])).toEqual([]);
    // another column balances where the mapped one does not: the mapping itself is in doubt
    const [problem] = actionProblems([misLogged, segment, balanced]);
    expect(problem?.severity).toBe('warn');
    expect(problem?.message).toMatch(/does not hold for action column 'offer_id'.*1\.80 for 'b'.*it holds for 'guest_kind'/);
  });

  it('builds one aggregate per candidate, as grouping sets of one read of the first rows', async () => {
    const sql = actionEvidenceSql('"log"', ['offer', 'zone'], ['p', 'q']);
    expect(sql).toContain('LIMIT 100000');
    expect(sql).toContain('GROUP BY GROUPING SETS ((k0), (k1))');
    expect(sql.match(/sum\(1\.0 \//g)?.length).toBe(4);
    // against a hand-computed table: offer a (p 0.5, 0.5) and b (p 0.25): Σ1/p = 4 and 4; zone z1 holds rows 1 and 3
    await engine.query(`CREATE OR REPLACE TABLE hand AS SELECT * FROM (VALUES ('a', 'z1', 0.5, 0.5), ('a', 'z2', 0.5, 0.5), ('b', 'z1', 0.25, 0.5)) t(offer, zone, p, q)`);
    const groups = parseActionEvidence(await engine.query(sql.replace('"log"', 'hand')), 2, 2);
    expect(groups[0]?.map((g) => [g.value, g.rows, g.sumInv[0], g.sumInv[1]])).toEqual([['a', 2, 4, 4], ['b', 1, 4, 2]]);
    expect(groups[1]?.map((g) => [g.value, g.rows, g.sumInv[0]])).toEqual([['z1', 2, 6], ['z2', 1, 2]]);
  });
});
