import { defineCheck, type CheckDefinition } from './define.ts';
import type { Metrics } from '../model/report.ts';
import { REQUIRED_ROLES, SINGLE_ROLES } from '../roles/roles.ts';
import { pct, result, type AuditContext, type DraftFinding } from './context.ts';
import { counted } from '../count-words.ts';

/** schema.roles: required roles present, typed and parseable; null share per role. */
function checkSchemaRoles(ctx: AuditContext): ReturnType<typeof result> {
  const { profile, roles, roleProblems } = ctx;
  const metrics: Metrics = { rows: profile.rows, segment_columns: roles.segments.length };
  const byName = new Map(profile.columns.map((c) => [c.name, c]));
  for (const role of SINGLE_ROLES) {
    const col = roles[role];
    metrics[`${role}.column`] = col;
    const c = col ? byName.get(col) : undefined;
    if (c) metrics[`${role}.null_share`] = profile.rows ? 1 - c.nonNull / profile.rows : 0;
  }
  const findings: DraftFinding[] = roleProblems.map((p) => ({ segment: {}, status: p.severity, metrics: { role: p.role }, message: p.message }));
  for (const role of REQUIRED_ROLES) {
    const col = roles[role];
    const c = col ? byName.get(col) : undefined;
    if (c && profile.rows > 0 && c.nonNull === 0) findings.push({ segment: {}, status: 'fail', metrics: { role }, message: `${role} column '${c.name}' is entirely null` });
  }
  const status = findings.some((f) => f.status === 'fail') ? 'fail' : findings.some((f) => f.status === 'warn') ? 'warn' : 'pass';
  const mapped = REQUIRED_ROLES.map((r) => `${r}=${roles[r] ?? '(missing)'}`).join(', ');
  const nulls = REQUIRED_ROLES.map((r) => metrics[`${r}.null_share`]).filter((x): x is number => typeof x === 'number');
  const worstNull = nulls.length ? Math.max(...nulls) : 0;
  const summary =
    status === 'fail'
      ? `The log cannot be audited as mapped: ${findings.filter((f) => f.status === 'fail').map((f) => f.message).join('; ')}.`
      : `${mapped}; ${counted(roles.segments.length, 'segment column')}${roles.segments.length ? ` (${roles.segments.join(', ')})` : ''}; largest null share among required roles ${pct(worstNull)}.`;
  return result('schema.roles', status, summary, metrics, findings, []);
}

export const schemaRoles: CheckDefinition<'schema.roles'> = defineCheck('schema.roles', {
  title: 'Column roles', blocking: true, panel: 'data', remedies: ['plan'],
  settings: [],
}, checkSchemaRoles);
