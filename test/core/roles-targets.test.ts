/** Role suggestion, validation and target parsing on small logs made in DuckDB (values written here). */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { suggestRoles } from '../../app/core/audit.ts';
import { resolveRoles, RoleError, validateRoles } from '../../app/core/roles/roles.ts';
import { parseDescribe, parseProfile, profileSql, describeSql } from '../../app/core/scan/profile.ts';
import { checkTargetActions, parseTarget, TargetError } from '../../app/core/targets/targets.ts';
import { resolveSettings, SettingsError } from '../../app/core/settings.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { SAMPLE } from './audit-helpers.ts';

let engine: Engine;
beforeAll(async () => {
  engine = await createNativeEngine();
});
afterAll(async () => engine?.close());

async function profileOf(sql: string) {
  await engine.query(`CREATE OR REPLACE TABLE t AS ${sql}`);
  const cols = parseDescribe(await engine.query(describeSql('t')));
  return parseProfile(await engine.query(profileSql('t', cols)), cols);
}

describe('role suggestion', () => {
  it('maps the demo log the way its columns are named and valued', async () => {
    const src = await engine.register({ kind: 'path', paths: [`${SAMPLE}maple-row-demo.parquet`] });
    const s = await suggestRoles((q) => engine.query(q), src.relation);
    const by = (role: string) => s.filter((x) => x.role === role).map((x) => x.column);
    expect(by('propensity')).toEqual(['propensity']);
    expect(by('action')).toEqual(['promotion']);
    expect(by('reward')).toEqual(['ordered']);
    expect(by('decision_id')).toEqual(['decision_id']);
    expect(by('time')).toEqual(['logged_at']);
    expect(by('policy_version')).toEqual(['policy_version']);
    expect(by('segments')).toEqual(['region', 'device', 'tenure']);
    expect(s.every((x) => x.reason.length > 0 && x.confidence > 0 && x.confidence <= 1)).toBe(true);
  });

  it('recognises epoch milliseconds as time and a text propensity with a specific message', async () => {
    const p = await profileOf(`SELECT i AS event_id, 1767225600000 + i * 60000 AS ts, CASE WHEN i % 10 = 0 THEN '0,5' ELSE '0.25' END AS p, ['a','b','c','d'][1 + i % 4] AS arm, (i % 3 = 0)::INTEGER AS reward FROM range(1000) r(i)`);
    const roles = resolveRoles(p, { propensity: 'p' });
    expect(roles.time).toBe('ts');
    expect(roles.timeEncoding).toBe('epoch_ms');
    expect(roles.action).toBe('arm');
    const problems = validateRoles(p, roles);
    // 100 of 1000 values are "0,5" (a decimal comma), which DuckDB does not parse as a number
    expect(problems.map((x) => x.message)).toContain("propensity column 'p' is VARCHAR; 10.0% of values do not parse as numbers");
  });

  it('overrides win and unknown columns are named', async () => {
    const p = await profileOf(`SELECT 0.5 AS q, 'x' AS a, 1 AS y`);
    expect(resolveRoles(p, { propensity: 'q', action: 'a', reward: 'y' }).reasons.propensity).toBe('override');
    expect(() => resolveRoles(p, { propensity: 'nope' })).toThrow(RoleError);
    expect(() => resolveRoles(p, { propensity: 'nope' })).toThrow(/column "nope" does not exist/);
  });

  it('says which required role is missing', async () => {
    const p = await profileOf(`SELECT 'x' AS colour, 3 AS size`);
    const problems = validateRoles(p, resolveRoles(p));
    expect(problems.filter((x) => x.severity === 'fail').map((x) => x.role).sort()).toEqual(['action', 'propensity', 'reward']);
  });
});

describe('always targets', () => {
  it('an action the log does not hold is an input error that lists the actions', () => {
    const ctx = { actionColumn: 'offer', logColumns: ['offer'], targetColumn: null };
    const t = parseTarget({ spec: 'always:o-wfi' }, ctx);
    expect(() => checkTargetActions([t], ['o-wifi', 'o-park'])).toThrow(TargetError);
    expect(() => checkTargetActions([t], ['o-wifi', 'o-park'])).toThrow('target always:o-wfi: the log has no action "o-wfi"; its 2 actions are "o-wifi", "o-park"');
    expect(() => checkTargetActions([parseTarget({ spec: 'always:o-park' }, ctx)], ['o-wifi', 'o-park'])).not.toThrow();
  });
});

describe('target tables', () => {
  const ctx = { actionColumn: 'promotion', logColumns: ['region', 'promotion', 'propensity'], targetColumn: null };
  it('parses a CSV table keyed on a segment column', () => {
    const t = parseTarget({ spec: 'table:x.csv', tableText: 'region,promotion,probability\nold-town,bakery,0.25\nold-town,household,0.75\n' }, ctx);
    expect(t.kind === 'table' && t.keyColumns).toEqual(['region']);
    expect(t.name).toBe('table:x');
  });
  it('parses JSON rows', () => {
    const t = parseTarget({ spec: 'table:x.json', tableText: JSON.stringify([{ region: 'a', action: 'k', probability: 1 }]) }, ctx);
    expect(t.kind).toBe('table');
  });
  it.each([
    ['a segment whose probabilities do not sum to 1', 'region,promotion,probability\na,x,0.5\na,y,0.4\n', /sum to 0.9/],
    ['a probability outside [0, 1]', 'region,promotion,probability\na,x,1.5\n', /outside \[0, 1\]/],
    ['a non-numeric probability', 'region,promotion,probability\na,x,high\n', /is not a number/],
    ['a repeated row', 'region,promotion,probability\na,x,0.5\na,x,0.5\n', /repeats/],
    ['a key column the log lacks', 'city,promotion,probability\na,x,1\n', /not columns of the log/],
    ['no probability column', 'region,promotion,weight\na,x,1\n', /no probability column/],
  ])('rejects %s', (_what, text, message) => {
    expect(() => parseTarget({ spec: 'table:t.csv', tableText: text }, ctx)).toThrow(TargetError);
    expect(() => parseTarget({ spec: 'table:t.csv', tableText: text }, ctx)).toThrow(message);
  });
  it('accepts a sum within 1e-9 of 1', () => {
    expect(() => parseTarget({ spec: 'table:t.csv', tableText: 'region,promotion,probability\na,x,0.3333333333\na,y,0.6666666667\n' }, ctx)).not.toThrow();
  });
  it('rejects an unknown spec', () => {
    expect(() => parseTarget({ spec: 'greedy' }, ctx)).toThrow(/not one of uniform/);
  });
});

describe('settings', () => {
  it('rejects unknown keys and out-of-range values with the key named', () => {
    expect(() => resolveSettings({ 'weights.ess.fail_minimum': 5 })).toThrow(SettingsError);
    expect(() => resolveSettings({ 'support.floor.epsilon': 2 })).toThrow(/at most 1/);
    expect(resolveSettings({ 'support.floor.epsilon': '0.05' })['support.floor.epsilon']).toBe(0.05);
  });
});

describe('role overrides of none', () => {
  it('null turns a suggested role off', async () => {
    const p = await profileOf(`SELECT 'v7' AS policy_version, 0.5 AS propensity, 'x' AS action, 1 AS reward FROM range(3)`);
    expect(resolveRoles(p).policy_version).toBe('policy_version');
    const r = resolveRoles(p, { policy_version: null });
    expect(r.policy_version).toBeNull();
    expect(r.reasons.policy_version).toBe('override: none');
  });
});
