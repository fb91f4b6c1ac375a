/**
 * schema.roles from hand-written rows: the required roles (action, propensity, reward; app/core/roles/roles.ts)
 * are mapped and not entirely null, each role's null share is 1 − non-null / rows (counted by hand here), and
 * problems the role validation raised become findings with their own severity.
 */
import { describe, expect, it } from 'vitest';
import { schemaRoles } from '../../../app/core/checks/schema-roles.ts';
import type { AuditContext } from '../../../app/core/checks/context.ts';
import { contextOf, type Rows } from './build.ts';

const ROWS: Rows[] = [{ action: 'a', p: 0.5, r: 1, count: 60 }, { action: 'b', p: 0.5, r: 0, count: 40 }];

/** The context with one column's non-null count replaced, as a profile of a log with missing values would give it. */
function withNonNull(ctx: AuditContext, column: string, nonNull: number): AuditContext {
  return { ...ctx, profile: { ...ctx.profile, columns: ctx.profile.columns.map((c) => (c.name === column ? { ...c, nonNull } : c)) } };
}

describe('schema.roles', () => {
  it('passes when every required role is mapped and filled; null shares 0', () => {
    const r = schemaRoles.run(contextOf(ROWS));
    expect(r.status).toBe('pass');
    expect(r.metrics['action.column']).toBe('action');
    expect(r.metrics['reward.null_share']).toBe(0);
    expect(r.summary).toContain('action=action, propensity=propensity, reward=reward');
    expect(r.findings).toHaveLength(0);
  });

  it('a reward column with 25 of 100 values missing: null share 0.25 (by hand), still a pass', () => {
    const r = schemaRoles.run(withNonNull(contextOf(ROWS), 'reward', 75));
    expect(r.status).toBe('pass');
    expect(r.metrics['reward.null_share']).toBe(0.25);
    expect(r.summary).toContain('largest null share among required roles 25');
  });

  it.each(['action', 'propensity', 'reward'])('a required %s column that is entirely null fails and blocks', (role) => {
    const r = schemaRoles.run(withNonNull(contextOf(ROWS), role, 0));
    expect(r.status).toBe('fail');
    expect(r.findings.map((f) => [f.status, f.metrics.role])).toEqual([['fail', role]]);
    expect(r.summary).toMatch(/^The log cannot be audited as mapped/);
    expect(schemaRoles.blocking).toBe(true);
  });

  it('a column that is not required may be entirely null: no finding', () => {
    expect(schemaRoles.run(withNonNull(contextOf(ROWS), 'decision_id', 0)).status).toBe('pass');
  });

  it('problems from role validation keep their severity: a warning warns, a failure fails', () => {
    const base = contextOf(ROWS);
    const warn = schemaRoles.run({ ...base, roleProblems: [{ role: 'time', severity: 'warn', message: 'time parsed from text' }] });
    expect(warn.status).toBe('warn');
    expect(warn.findings[0]?.message).toBe('time parsed from text');
    const fail = schemaRoles.run({ ...base, roleProblems: [{ role: 'propensity', severity: 'fail', message: 'propensity is not numeric' }] });
    expect(fail.status).toBe('fail');
  });
});
