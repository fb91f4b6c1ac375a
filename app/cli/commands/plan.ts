/**
 * `counterweight plan --dialect duckdb|clickhouse --table T [--results DIR]`: the audit's statements for a table
 * in an engine we do not drive (README, "An exported plan"). Each step's parameters come from the results
 * before it, so the plan is printed in steps: with no results, the describe statement; with its result saved
 * in DIR, the profile statements; with those, the cube, tails and duplicates statements, with the buckets, caps,
 * reward shift and grouping the profile chose. `audit --cube DIR/cube.parquet` then audits from the results.
 */
import path from 'node:path';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { listFlag, stringFlag } from '../args.ts';
import { loadSettingsFile, parseRoleFlags } from '../audit-options.ts';
import { UsageError } from '../errors.ts';
import type { CliIo } from '../io.ts';
import { dialectNamed } from '../../core/sql/dialects.ts';
import type { Dialect } from '../../core/sql/dialect.ts';
import { openEngine } from '../sources.ts';
import { planFromFiles, resultFiles } from '../plan-files.ts';

export const planSpec: CommandSpec = {
  name: 'plan',
  summary: 'Print the audit\'s scan statements for a table in another engine (--dialect duckdb|clickhouse --table T), step by step: save each result as DIR/<name>.parquet|csv|json, run plan again with --results DIR, then audit --cube DIR/cube.parquet.',
  positionals: { name: 'none', min: 0, max: 0 },
  flags: {
    dialect: { kind: 'string', value: 'duckdb|clickhouse', choices: ['duckdb', 'clickhouse'], help: 'the SQL dialect of the engine that will run the statements' },
    table: { kind: 'string', value: 'DB.TABLE', help: 'the table (or view) holding the log, as that engine names it' },
    where: { kind: 'string', value: 'CONDITION', help: 'audit only the rows where this condition (in the engine\'s SQL) holds' },
    results: { kind: 'string', value: 'DIR', help: 'the folder holding the results saved so far (describe.parquet, profile-first-rows.parquet, ...)' },
    role: { kind: 'list', value: 'NAME=COLUMN', help: 'map a column to a role; action, propensity and reward must be given' },
    segments: { kind: 'string', value: 'COL,COL', help: "segment columns, comma-separated ('none' for no segments)" },
    settings: { kind: 'string', value: 'FILE', help: 'thresholds from a .json or .yaml file (the cube\'s buckets and caps follow them)' },
  },
};

/** The table as the dialect names it: each dotted part quoted, and the filter as a subquery. */
export function planRelation(d: Dialect, table: string, where: string | undefined): string {
  const parts = table.split('.');
  if (parts.some((p) => p.trim() === '')) throw new UsageError(`--table takes TABLE or DB.TABLE, got '${table}'`);
  const name = parts.map((p) => d.ident(p.trim())).join('.');
  return where?.trim() ? `(SELECT * FROM ${name} WHERE ${where.trim()})` : name;
}

export async function runPlan(args: ParsedArgs, io: CliIo): Promise<number> {
  const { flags } = args;
  const dialectName = stringFlag(flags, 'dialect');
  const table = stringFlag(flags, 'table');
  if (!dialectName || !table) throw new UsageError("'plan' needs --dialect duckdb|clickhouse and --table T");
  const d = dialectNamed(dialectName);
  const roles = parseRoleFlags(listFlag(flags, 'role'), stringFlag(flags, 'segments'));
  const settingsFile = stringFlag(flags, 'settings');
  const settings = settingsFile ? loadSettingsFile(settingsFile, io.cwd) : undefined;
  const resultsDir = stringFlag(flags, 'results');
  const dir = path.resolve(io.cwd, resultsDir ?? '.');
  const files = resultsDir ? resultFiles(dir, new Map()) : new Map<string, string>();
  const engine = await openEngine('native');
  try {
    const { plan } = await planFromFiles(engine, { dialect: d, relation: planRelation(d, table, stringFlag(flags, 'where')), roles, ...(settings ? { settings } : {}), files });
    const shown = resultsDir ?? 'DIR';
    for (const s of plan.statements) {
      io.stdout.write(`-- counterweight plan: ${s.name}${s.answered ? ` (answered: ${path.basename(files.get(s.name) as string)})` : ` -> save the result as ${shown}/${s.stem}.parquet (or .csv, .json)`}\n${s.sql.trim()};\n\n`);
    }
    io.stdout.write(plan.complete
      ? `-- every statement is answered: counterweight audit --cube ${shown}/cube.${path.extname(files.get('cube') ?? '.parquet').slice(1)} with the same --role, --segments and --settings\n`
      : `-- run the statements above, save their results, then: counterweight plan ... --results ${shown}\n`);
    return 0;
  } finally {
    await engine.close();
  }
}
