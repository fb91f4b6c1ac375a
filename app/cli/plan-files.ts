/**
 * The files of an exported plan (README, "An exported plan"): `counterweight plan` prints the statements whose
 * parameters the results so far fix, and `audit --cube FILE` reads their results (Parquet, CSV or
 * newline-delimited JSON, as an engine exports them) from files named by each statement's stem beside the
 * cube file. Results are read by native DuckDB from the named files only.
 */
import { existsSync } from 'node:fs';
import path from 'node:path';
import type { TargetInput } from '../core/audit.ts';
import type { Report } from '../core/model/report.ts';
import { planScans, scansFromResults, STATEMENTS, type Plan } from '../core/plan/plan.ts';
import { dialectNamed } from '../core/sql/dialects.ts';
import { fingerprintFiles } from '../report/fingerprint.ts';
import type { AuditCore } from './commands/core.ts';
import { openEngine } from './sources.ts';
import type { RoleOverrides } from '../core/roles/roles.ts';
import type { Dialect } from '../core/sql/dialect.ts';
import type { Table } from '../core/table.ts';
import type { Engine, SourceFormat } from '../engine/types.ts';
import { UsageError } from './errors.ts';

const EXTENSIONS: readonly [string, SourceFormat][] = [['.parquet', 'parquet'], ['.csv', 'csv'], ['.json', 'ndjson'], ['.ndjson', 'ndjson'], ['.jsonl', 'ndjson']];

export function formatOf(file: string): SourceFormat {
  const f = EXTENSIONS.find(([ext]) => file.toLowerCase().endsWith(ext));
  if (!f) throw new UsageError(`cannot tell the format of ${file} from its name: give a .parquet, .csv or .json (one object a line) file`);
  return f[1];
}

/** The result file of each statement found in `dir` (stem.parquet, stem.csv, stem.json ...), with overrides. */
export function resultFiles(dir: string, overrides: ReadonlyMap<string, string>): Map<string, string> {
  const out = new Map<string, string>();
  for (const s of STATEMENTS) {
    const given = overrides.get(s.name);
    if (given) {
      if (!existsSync(given)) throw new UsageError(`no such file: ${given}`);
      out.set(s.name, given);
      continue;
    }
    const found = EXTENSIONS.map(([ext]) => path.join(dir, `${s.stem}${ext}`)).filter(existsSync);
    if (found.length > 1) throw new UsageError(`${dir} holds more than one result for ${s.stem}: ${found.map((f) => path.basename(f)).join(', ')}`);
    if (found[0]) out.set(s.name, found[0]);
  }
  return out;
}

/** Reads each result file into a table, ordered as the statement ordered it where the engine may not keep it. */
export async function readResults(engine: Engine, files: ReadonlyMap<string, string>): Promise<Map<string, Table>> {
  const out = new Map<string, Table>();
  for (const [name, file] of files) {
    let relation: string;
    try {
      relation = (await engine.register({ kind: 'path', paths: [file], format: formatOf(file) })).relation;
    } catch (e) {
      throw new UsageError(`cannot read ${file}: ${(e as Error).message}`);
    }
    const t = await engine.query(`SELECT * FROM ${relation}`);
    out.set(name, t);
  }
  return out;
}

export async function planFromFiles(engine: Engine, o: { dialect: Dialect; relation: string; roles: RoleOverrides; settings?: Readonly<Record<string, number | string | boolean>>; files: ReadonlyMap<string, string> }): Promise<{ plan: Plan; results: Map<string, Table> }> {
  const results = await readResults(engine, o.files);
  const plan = await planScans({ dialect: o.dialect, relation: o.relation, roles: o.roles, ...(o.settings ? { settings: o.settings } : {}), results });
  return { plan, results };
}

/** The audit from an exported plan's results: the plan is rebuilt from them, so the cube must be the one it prints. */
export async function auditFromResults(core: AuditCore, o: { cube: string; tails?: string; dialect: string; roles: RoleOverrides; targets: readonly TargetInput[]; settings?: Readonly<Record<string, number | string | boolean>>; cwd: string; peakRssMb?: () => number }): Promise<{ report: Report; columns: readonly { name: string; type: string }[]; files: string[] }> {
  if (!existsSync(o.cube)) throw new UsageError(`no such file: ${o.cube}`);
  const overrides = new Map<string, string>([['cube', o.cube], ...(o.tails ? [['tails', o.tails] as [string, string]] : [])]);
  const files = resultFiles(path.dirname(o.cube), overrides);
  const d = dialectNamed(o.dialect);
  const engine = await openEngine('native');
  let report: Report;
  let plan: Plan;
  try {
    const read = await planFromFiles(engine, { dialect: d, relation: 'log', roles: o.roles, ...(o.settings ? { settings: o.settings } : {}), files });
    plan = read.plan;
    const names = new Map([...files].map(([n, f]) => [n, f] as [string, string]));
    const { inspection, scans } = scansFromResults(plan, read.results, names);
    const fingerprinted = await fingerprintFiles([...files.values()], o.cwd);
    report = await core.runAudit(() => Promise.reject(new Error('an audit from a plan\'s results reads no log')), {
      relation: 'log',
      input: { files: fingerprinted, format: `plan results (${d.name})` },
      roles: o.roles,
      targets: o.targets,
      ...(o.settings ? { settings: o.settings } : {}),
      inspection,
      scans,
      engine: 'plan results',
      ...(o.peakRssMb ? { peakRssMb: o.peakRssMb } : {}),
    });
  } finally {
    await engine.close();
  }
  return { report, columns: (plan.profile?.columns ?? []).map((c) => ({ name: c.name, type: c.type })), files: [...files.values()] };
}
