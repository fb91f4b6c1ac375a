import { createHash } from 'node:crypto';
import { renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import type { InputFile, Report, Verdict } from '../../core/model/report.ts';
import type { Dialect } from '../../core/sql/dialect.ts';
import type { Engine } from '../../engine/types.ts';
import { fingerprintFiles } from '../../report/fingerprint.ts';
import { serializeReport } from '../../report/json.ts';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { listFlag, stringFlag } from '../args.ts';
import { loadSettingsFile, parseRoleFlags, readTargets } from '../audit-options.ts';
import { EXIT, InterruptedError, UsageError } from '../errors.ts';
import { useColour, type CliIo } from '../io.ts';
import { ProgressLine } from '../progress.ts';
import { peakRssMb } from '../../engine/memory.ts';
import { isClickHouseAddress } from '../../engine/clickhouse-address.ts';
import type { OpenedSource } from '../warehouse.ts';
import { describeColumns, ENGINE_FLAG, engineChoice as engineChoiceOf, MEMORY_FLAGS, memoryFlags, openEngine, registerSources } from '../sources.ts';
import { projectionOf } from '../../engine/audit-hooks.ts';
import { formatAuditSummary, painter } from '../summary.ts';
import { emitComparison, FAIL_ON_CHANGE } from './compare.ts';
import { loadAuditCore } from './core.ts';
import { readReport } from './report-file.ts';
import { planCsv, planJson } from '../../core/remedies/plan-table.ts';
import type { TargetInput } from '../../core/audit.ts';
import type { RoleOverrides } from '../../core/roles/roles.ts';
import { auditParts, rangeSoFar, readState, stateFor, storePart } from '../parts.ts';

export const auditSpec: CommandSpec = {
  name: 'audit',
  summary: 'Audit a decision log (files, or a ClickHouse table as clickhouse://HOST:PORT/DB.TABLE with CLICKHOUSE_USER / CLICKHOUSE_PASSWORD[_FILE]): checks, verdict, estimates; writes the JSON and HTML reports.\nExit status: 0 supported (or with caveats), 1 supported with caveats under --fail-on warn, 2 not supported, 3 usage or input error.',
  positionals: { name: 'source', min: 0, max: Infinity },
  flags: {
    parts: { kind: 'string', value: 'DIR', help: 'audit the parts kept in DIR together (a partitioned log read part by part); with --add-part, read those parts first' },
    'part-examples': { kind: 'boolean', help: 'with --parts: read the part files again (where they are unchanged) for the findings\' example rows, as the whole log\'s audit lists them' },
    'add-part': { kind: 'list', value: 'FILE', help: 'with --parts: read this part (one day\'s file, say) into DIR; only the new part is scanned' },
    role: { kind: 'list', value: 'NAME=COLUMN', help: 'map a column to a role (decision_id, time, action, propensity, reward, policy_version, target_propensity, propensity_vector, action_set_size, segments)' },
    segments: { kind: 'string', value: 'COL,COL', help: "segment columns, comma-separated ('none' for no segments)" },
    target: { kind: 'list', value: 'SPEC', help: 'target policy: uniform, always:<action>, table:<file.csv|file.json>, column:<name>' },
    settings: { kind: 'string', value: 'FILE', help: 'thresholds from a .json or .yaml file of setting: value pairs' },
    engine: ENGINE_FLAG,
    ...MEMORY_FLAGS,
    cube: { kind: 'string', value: 'FILE', help: "audit from the results of an exported plan (counterweight plan): FILE is the cube statement's result; the others (describe, profile-first-rows, profile, tails, duplicates) are read beside it" },
    tails: { kind: 'string', value: 'FILE', help: 'with --cube: the tails statement\'s result, when it is not beside the cube as tails.<ext>' },
    dialect: { kind: 'string', value: 'duckdb|clickhouse', choices: ['duckdb', 'clickhouse'], help: 'with --cube: the dialect the plan was printed in (default duckdb)' },
    where: { kind: 'string', value: 'CONDITION', help: 'with clickhouse://HOST:PORT/DB.TABLE: audit only the rows where this ClickHouse SQL condition holds (e.g. a date range)' },
    json: { kind: 'string', value: 'FILE|-', help: 'write the JSON report to FILE, or to stdout with -' },
    html: { kind: 'string', value: 'FILE', help: 'write the self-contained HTML report' },
    plan: { kind: 'string', value: 'FILE', help: 'write the next-log plan (remedies.plan) as CSV, or JSON when FILE ends in .json' },
    'fail-on': { kind: 'string', value: 'warn|fail', choices: ['warn', 'fail'], help: "exit non-zero on 'fail' (default: exit 2 when not supported) or also on 'warn' (exit 1)" },
    quiet: { kind: 'boolean', help: 'no progress line and no summary' },
    baseline: { kind: 'string', value: 'REPORT.json', help: 'also compare with this earlier report; the exit status is then the comparison\'s (0 no regression, 2 regression)' },
    'comparison-json': { kind: 'string', value: 'FILE|-', help: 'with --baseline: write the comparison JSON' },
    'comparison-html': { kind: 'string', value: 'FILE', help: 'with --baseline: write the HTML comparison' },
    'fail-on-change': { ...FAIL_ON_CHANGE, help: 'with --baseline: ' + FAIL_ON_CHANGE.help },
  },
};

export function exitCodeFor(verdict: Verdict, failOn: 'warn' | 'fail'): number {
  if (verdict === 'not-supported') return EXIT.notSupported;
  if (verdict === 'supported-with-caveats' && failOn === 'warn') return EXIT.caveats;
  return EXIT.supported;
}

const STAGE_NAMES: Record<string, string> = { profile: 'profiling columns', cube: 'building the cube', tails: 'reading the weight tail', checks: 'running checks' };

export async function runAuditCommand(args: ParsedArgs, io: CliIo): Promise<number> {
  const { flags, positionals } = args;
  const roles = parseRoleFlags(listFlag(flags, 'role'), stringFlag(flags, 'segments'));
  const settingsFile = stringFlag(flags, 'settings');
  const settings = settingsFile ? loadSettingsFile(settingsFile, io.cwd) : undefined;
  const targets = readTargets(listFlag(flags, 'target'), io.cwd);
  const jsonOut = stringFlag(flags, 'json');
  const htmlOut = stringFlag(flags, 'html');
  const planOut = stringFlag(flags, 'plan');
  const failOn = (stringFlag(flags, 'fail-on') ?? 'fail') as 'warn' | 'fail';
  const engineChoice = engineChoiceOf(flags);
  const memory = memoryFlags(flags, engineChoice, io.cwd);
  const quiet = flags.quiet === true;
  const baselineFile = stringFlag(flags, 'baseline');
  if (!baselineFile && (flags['comparison-json'] !== undefined || flags['comparison-html'] !== undefined || flags['fail-on-change'] !== undefined)) {
    throw new UsageError('--comparison-json, --comparison-html and --fail-on-change need --baseline REPORT.json');
  }
  if (baselineFile && jsonOut === '-' && stringFlag(flags, 'comparison-json') === '-') throw new UsageError('only one of --json and --comparison-json can write to stdout');
  // Read before the audit runs, so a bad baseline fails at once.
  const baseline = baselineFile ? readReport(baselineFile, io.cwd) : undefined;
  const partsDir = stringFlag(flags, 'parts');
  const addParts = listFlag(flags, 'add-part');
  if (addParts.length && !partsDir) throw new UsageError('--add-part needs --parts DIR, the folder that keeps the parts read so far');
  if (partsDir && positionals.length) throw new UsageError(`with --parts, give new parts with --add-part FILE, not as sources (got ${positionals.join(' ')})`);
  const cubeFile = stringFlag(flags, 'cube');
  if (!cubeFile && (flags.tails !== undefined || flags.dialect !== undefined)) throw new UsageError('--tails and --dialect go with --cube FILE');
  if (cubeFile && (partsDir || positionals.length)) throw new UsageError('--cube audits from an exported plan\'s results: give no sources and no --parts');
  if (!partsDir && !cubeFile && positionals.length === 0) throw new UsageError("'audit' needs a source (usage: counterweight audit <source...> [options]), or --parts DIR");
  const core = await loadAuditCore();

  let engine: Engine | undefined;
  const progress = new ProgressLine(io.stderr, !quiet && io.stderr.isTTY === true, () => engine?.queryProgress?.());
  const { signal } = io;
  const stopIfInterrupted = (): void => {
    if (signal?.aborted) throw new InterruptedError();
  };
  try {
    if (cubeFile) {
      progress.stage('reading the plan\'s results');
      const tails = stringFlag(flags, 'tails');
      const cube = path.resolve(io.cwd, cubeFile);
      const { auditFromResults } = await import('../plan-files.ts');
      const { report, columns, files } = await auditFromResults(core, { cube, ...(tails ? { tails: path.resolve(io.cwd, tails) } : {}), dialect: stringFlag(flags, 'dialect') ?? 'duckdb', roles, targets, ...(settings ? { settings } : {}), cwd: io.cwd, peakRssMb });
      guardOutputs([jsonOut, htmlOut, planOut], files, io.cwd);
      progress.stop();
      return await finish(report, files.join(', '), columns);
    }
    if (partsDir) {
      const dir = path.resolve(io.cwd, partsDir);
      guardOutputs([jsonOut, htmlOut, planOut], addParts.filter((p) => !isClickHouseAddress(p)), io.cwd);
      const partWhere = stringFlag(flags, 'where');
      if (partWhere !== undefined && !addParts.some(isClickHouseAddress)) throw new UsageError('--where filters a table in a server: with --parts, give the part as --add-part clickhouse://HOST:PORT/DB.TABLE --where COND (one day, say)');
      if (partWhere !== undefined && addParts.length > 1) throw new UsageError('--where picks one part of a ClickHouse table: add one part at a time');
      for (const part of addParts) {
        progress.stage(`reading the part ${part}`);
        await addPart(dir, part, { roles, targets, settings, engineChoice, memory, cwd: io.cwd, signal, where: partWhere, env: io.env });
        stopIfInterrupted();
      }
      const state = readState(dir);
      if (!state) throw new UsageError(`${partsDir} holds no parts yet: add one with --add-part FILE`);
      progress.stage('merging the parts');
      const examplesFrom = flags['part-examples'] === true ? { cwd: io.cwd, open: () => openEngine(engineChoice, memory) } : undefined;
      const { report, columns } = await auditParts(core, dir, state, peakRssMb, examplesFrom);
      progress.stop();
      return await finish(report, state.parts.map((p) => p.path).join(', '), columns);
    }
    progress.stage('opening the log');
    const where = stringFlag(flags, 'where');
    const warehouse = positionals.some(isClickHouseAddress);
    if (where !== undefined && !warehouse) throw new UsageError('--where filters a table in a server (clickhouse://HOST:PORT/DB.TABLE); for files, filter the file first');
    let opened: OpenedSource;
    if (warehouse) {
      if (positionals.length > 1) throw new UsageError('give one clickhouse://HOST:PORT/DB.TABLE source, not several');
      if (flags.engine !== undefined) throw new UsageError('--engine chooses the engine for files; a clickhouse:// table is read by its own server');
      const { openClickHouseTable } = await import('../warehouse.ts');
      opened = await openClickHouseTable(positionals[0] as string, where, io.env);
      engine = opened.engine;
    } else {
      engine = await openEngine(engineChoice, memory);
      stopIfInterrupted();
      const source = await registerSources(engine, positionals, io.cwd);
      guardOutputs([jsonOut, htmlOut, planOut, stringFlag(flags, 'comparison-json'), stringFlag(flags, 'comparison-html')], source.files, io.cwd);
      progress.stage('fingerprinting input files');
      const files = await fingerprintFiles(source.files, io.cwd);
      stopIfInterrupted();
      opened = { engine, relation: source.relation, scanSql: source.scanSql, input: { files, format: source.format }, columns: await describeColumns(engine, source.relation) };
    }
    stopIfInterrupted();
    const { columns } = opened;
    const report: Report = await core.runAudit((sql) => (engine as Engine).query(sql, { signal }), {
      relation: opened.relation,
      input: opened.input,
      ...(opened.scanSql ? { scanSql: opened.scanSql } : {}),
      ...(opened.dialect ? { dialect: opened.dialect } : {}),
      ...(opened.table ? { table: opened.table } : {}),
      roles,
      targets,
      ...(settings ? { settings } : {}),
      onProgress: (p) => progress.audit(p, STAGE_NAMES[p.stage] ?? p.stage),
      engine: engine.kind,
      ...projectionOf(engine, opened.relation),
      peakRssMb,
      ...(signal ? { signal } : {}),
    });
    progress.stop();
    stopIfInterrupted();
    return await finish(report, positionals.join(', '), columns);
  } finally {
    progress.stop();
    await engine?.close();
  }

  async function finish(report: Report, sources: string, columns: readonly { name: string; type: string }[]): Promise<number> {
    await writeOutputs(report, jsonOut, htmlOut, io);
    if (planOut) writeFile(planOut, /\.json$/i.test(planOut) ? planJson(report.remedies) : planCsv(report.remedies), io.cwd);
    if (!quiet) {
      const summaryStream = jsonOut === '-' ? io.stderr : io.stdout;
      summaryStream.write(formatAuditSummary(report, columns, painter(useColour(summaryStream, io.env))));
      const written = [jsonOut && jsonOut !== '-' ? `JSON report: ${jsonOut}` : '', htmlOut ? `HTML report: ${htmlOut}` : '', planOut ? `Next-log plan: ${planOut}` : ''].filter(Boolean);
      if (written.length) summaryStream.write(`${written.join('\n')}\n`);
    }
    if (baseline && baselineFile) {
      const comparisonJson = stringFlag(flags, 'comparison-json');
      const comparisonHtml = stringFlag(flags, 'comparison-html');
      const failOnChange = stringFlag(flags, 'fail-on-change') === 'any-change' ? 'any-change' : 'regression';
      if (!quiet) (jsonOut === '-' || comparisonJson === '-' ? io.stderr : io.stdout).write('\n');
      return await emitComparison(baseline, report, { baseline: baselineFile, current: sources }, { json: comparisonJson, html: comparisonHtml, failOn: failOnChange, quiet, summaryOnStderr: jsonOut === '-' }, io);
    }
    return exitCodeFor(report.verdict, failOn);
  }
}

/**
 * Reads one part into the parts folder: only this part is scanned. The first part fixes the roles (given,
 * or suggested from it and then kept as given), targets and settings every later part is read with.
 */
async function addPart(dir: string, part: string, o: { roles: RoleOverrides; targets: readonly TargetInput[]; settings: Readonly<Record<string, number | string | boolean>> | undefined; engineChoice: ReturnType<typeof engineChoiceOf>; memory: ReturnType<typeof memoryFlags>; cwd: string; signal: AbortSignal | undefined; where: string | undefined; env: CliIo['env'] }): Promise<void> {
  const table = isClickHouseAddress(part);
  let engine: Engine;
  let source: { relation: string; format: string } = { relation: '', format: '' };
  let file: InputFile | undefined;
  let dialect: Dialect | undefined;
  if (table) {
    const { openClickHouseTable } = await import('../warehouse.ts');
    const opened = await openClickHouseTable(part, o.where, o.env);
    ({ engine, dialect } = opened);
    source = { relation: opened.relation, format: 'clickhouse' };
    // a table part is named by its address and filter (the name is the part's file name in DIR: no '/' in it)
    const address = `${part}${o.where ? `?where=${encodeURIComponent(o.where.trim())}` : ''}`;
    file = { path: address, bytes: 0, sha256: createHash('sha256').update(`${opened.table?.server ?? ''}\n${address}`).digest('hex') };
  } else {
    engine = await openEngine(o.engineChoice, o.memory);
  }
  try {
    if (!table) {
      const registered = await registerSources(engine, [part], o.cwd);
      source = registered;
      [file] = await fingerprintFiles(registered.files, o.cwd);
      if (!file || registered.files.length !== 1) throw new UsageError(`--add-part takes one file per part, got ${registered.files.length} for ${part}`);
    }
    if (!file) throw new UsageError(`cannot read the part ${part}`);
    const run = (sql: string) => engine.query(sql, o.signal ? { signal: o.signal } : {});
    let state = stateFor(dir, { roles: o.roles, targets: o.targets, settings: o.settings, format: source.format });
    if (state.parts.length === 0) {
      const { inspectRoles } = await import('../../core/audit.ts');
      const { resolveRoles, SINGLE_ROLES } = await import('../../core/roles/roles.ts');
      const inspected = await inspectRoles(run, source.relation, dialect);
      const resolved = resolveRoles(inspected.profile, o.roles, inspected.evidence);
      const kept: Record<string, string | null | readonly string[]> = { segments: resolved.segments };
      // a role the first part lacks stays unset (as in an audit of the whole log), so its reason reads the same
      for (const r of SINGLE_ROLES) if (resolved[r] !== null) kept[r] = resolved[r];
      state = { ...state, roles: kept as RoleOverrides };
    }
    const { scanPart } = await import('../../core/parts/scan.ts');
    storePart(dir, state, file, await scanPart(run, source.relation, state.roles, state.settings, rangeSoFar(state), dialect));
  } finally {
    await engine.close();
  }
}

/** Reports are never written over an input file (input files are never modified). */
function guardOutputs(outputs: readonly (string | undefined)[], inputs: readonly string[], cwd: string): void {
  const inputSet = new Set(inputs.map((f) => path.resolve(cwd, f)));
  for (const out of outputs) {
    if (out && out !== '-' && inputSet.has(path.resolve(cwd, out))) throw new UsageError(`refusing to write a report over the input file ${out}`);
  }
}

async function writeOutputs(report: Report, jsonOut: string | undefined, htmlOut: string | undefined, io: CliIo): Promise<void> {
  if (jsonOut === '-') io.stdout.write(serializeReport(report));
  else if (jsonOut) writeFile(jsonOut, serializeReport(report), io.cwd);
  if (htmlOut) {
    // ECharts loads only when an HTML report is asked for (it dominates start-up time).
    const { renderHtmlReport } = await import('../../report/html.ts');
    writeFile(htmlOut, renderHtmlReport(report), io.cwd);
  }
}

/** Written beside the target and renamed over it, so an interrupted write never leaves a partial report. */
export function writeFile(file: string, text: string, cwd: string): void {
  const target = path.resolve(cwd, file);
  const partial = `${target}.${process.pid}.partial`;
  try {
    // A device or pipe (/dev/stdout, a FIFO) is written in place; renaming over it would replace it.
    const existing = statSync(target, { throwIfNoEntry: false });
    if (existing && !existing.isFile()) {
      writeFileSync(target, text);
      return;
    }
    writeFileSync(partial, text);
    renameSync(partial, target);
  } catch (error) {
    rmSync(partial, { force: true });
    throw new UsageError(`cannot write ${file}: ${(error as NodeJS.ErrnoException).code ?? (error as Error).message}`);
  }
}
