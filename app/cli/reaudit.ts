/**
 * `verify --reaudit`: run the audit a report records again, on its input files, and compare. The audit's
 * sums are exact (app/core/scan/cube.ts), so the same tool version on the same bytes with the same roles,
 * targets and settings gives the same report body; this says so, or lists what differs.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { Report } from '../core/model/report.ts';
import type { RoleOverrides } from '../core/roles/roles.ts';
import { sha256Hex } from '../report/signoff.ts';
import { loadAuditCore } from './commands/core.ts';
import { openEngine, registerSources, type EngineChoice } from './sources.ts';
import { projectionOf } from '../engine/audit-hooks.ts';

export interface ReauditOutcome {
  readonly same: boolean;
  readonly lines: readonly string[];
}

/** The report without what may differ between two runs of one audit: its run record and its sign-off. */
function reportBody(report: Report): Omit<Report, 'run' | 'signoff'> {
  const { run: _run, signoff: _signoff, ...body } = report;
  return body;
}

/** SHA-256 of the body's JSON (keys in the report's own order, as the writer produces them). */
export function bodyDigest(report: Report): string {
  return sha256Hex(JSON.stringify(reportBody(report)));
}

/** The target specs with their table files read again (beside the working folder or the report). */
function targetsOf(report: Report, baseDirs: readonly string[]): { spec: string; tableText?: string }[] {
  return report.targets.map(({ spec }) => {
    if (!spec.startsWith('table:')) return { spec };
    const file = spec.slice('table:'.length);
    for (const dir of baseDirs) {
      try {
        return { spec, tableText: readFileSync(path.resolve(dir, file), 'utf8') };
      } catch {
        // try the next folder
      }
    }
    throw new Error(`target ${spec}: cannot read ${file} (looked beside the working folder and the report)`);
  });
}

/**
 * The target lists the audit may have been given. A report holding only uniform and always:<action>
 * targets may come from an audit given none (those are the ones it adds); that is tried first.
 */
function targetChoices(report: Report, baseDirs: readonly string[]): { spec: string; tableText?: string }[][] {
  const specs = report.targets.map((t) => t.spec);
  const maybeImplicit = specs.includes('uniform') && specs.every((s) => s === 'uniform' || s.startsWith('always:'));
  return maybeImplicit ? [[], targetsOf(report, baseDirs)] : [targetsOf(report, baseDirs)];
}

/** The roles the audit was given by hand (recorded with the reason "override"); the rest it suggested again. */
function givenRoles(report: Report): RoleOverrides {
  const r = report.roles;
  const out: Record<string, unknown> = {};
  for (const role of ['decision_id', 'time', 'action', 'propensity', 'reward', 'policy_version', 'target_propensity', 'propensity_vector', 'action_set_size'] as const) {
    const reason = r.reasons[role];
    if (reason === 'override') out[role] = r[role];
    else if (reason === 'override: none') out[role] = null;
  }
  if (r.reasons.segments === 'override') out.segments = r.segments;
  return out as RoleOverrides;
}

/** Settings whose value differs from the default, as the audit was given them. */
function givenSettings(report: Report): Record<string, number | string | boolean> {
  const out: Record<string, number | string | boolean> = {};
  for (const [k, s] of Object.entries(report.settings)) if (JSON.stringify(s.value) !== JSON.stringify(s.default)) out[k] = s.value as number | string | boolean;
  return out;
}

/** Paths (JSON-pointer-like) where two JSON values differ, at most `limit` of them. */
function differences(a: unknown, b: unknown, limit = 10, at = ''): string[] {
  if (a === b) return [];
  if (typeof a !== 'object' || typeof b !== 'object' || a === null || b === null || Array.isArray(a) !== Array.isArray(b)) {
    return [`${at || '/'}: ${JSON.stringify(a)?.slice(0, 80)} → ${JSON.stringify(b)?.slice(0, 80)}`];
  }
  const out: string[] = [];
  const keys = Array.isArray(a) ? [...Array(Math.max(a.length, (b as unknown[]).length)).keys()].map(String) : [...new Set([...Object.keys(a), ...Object.keys(b)])];
  for (const k of keys) {
    if (out.length >= limit) break;
    out.push(...differences((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], limit - out.length, `${at}/${k}`));
  }
  return out;
}

/**
 * Re-runs the recorded audit on `files` (the located input files, whose hashes the caller has checked) and
 * compares the body's digest with the report's.
 */
export async function reaudit(report: Report, files: readonly string[], cwd: string, reportDir: string): Promise<ReauditOutcome> {
  const core = await loadAuditCore();
  const { TOOL_VERSION } = await import('../core/version.ts');
  if (report.tool.version !== TOOL_VERSION) {
    return { same: false, lines: [`FAIL  re-audit: the report was made by counterweight ${report.tool.version}; this is ${TOOL_VERSION}, which may compute differently. Re-audit with version ${report.tool.version}.`] };
  }
  const choice: EngineChoice = report.run.engine === 'wasm-node' || report.run.engine === 'wasm' ? 'wasm' : 'native';
  let again: Report | null = null;
  for (const targets of targetChoices(report, [cwd, reportDir])) {
    const engine = await openEngine(choice);
    try {
      const source = await registerSources(engine, files, cwd);
      again = await core.runAudit((sql) => engine.query(sql), {
        relation: source.relation,
        // the recorded fingerprint: the caller has checked that the files hash the same
        input: { files: report.input.files, format: report.input.format },
        scanSql: source.scanSql,
        roles: givenRoles(report),
        targets,
        settings: givenSettings(report),
        engine: engine.kind,
        ...projectionOf(engine, source.relation),
        // the recorded start time: "future" timestamps are judged against it, as they were
        now: () => Date.parse(report.run.started_at),
      });
    } finally {
      await engine.close();
    }
    if (bodyDigest(again) === bodyDigest(report)) break;
  }
  if (!again) throw new Error('re-audit: no audit was run');
  const expected = bodyDigest(report);
  const actual = bodyDigest(again);
  if (expected === actual) return { same: true, lines: [`ok    re-audit on ${choice} gives the same report body (sha256 ${actual.slice(0, 16)}…)`] };
  const diff = differences(reportBody(report), reportBody(again));
  const onlySource = diff.every((d) => /^\/queries\/0\//.test(d)) && report.queries[0]?.name === 'source';
  if (onlySource) return { same: true, lines: [`ok    re-audit on ${choice} gives the same report body except where the files are read from (${diff[0]})`] };
  return { same: false, lines: [`FAIL  re-audit on ${choice} gives a different report body (recorded ${expected.slice(0, 16)}…, now ${actual.slice(0, 16)}…); first differences:`, ...diff.map((d) => `        ${d}`)] };
}
