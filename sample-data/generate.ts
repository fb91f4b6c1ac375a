/**
 * Writes the Maple Row Market sample data (sample-data/README.md): the demo and clean decision logs and the week
 * after the demo (`next`) as CSV and Parquet, their manifests, and the candidate policy table v9.
 *
 *   node --import tsx sample-data/generate.ts [--rows N] [--out DIR] [--seed S] [--formats parquet,csv]
 *                                             [--clean-only | --demo-only]
 */
import { createWriteStream } from 'node:fs';
import { mkdir, rename, rm, stat, writeFile } from 'node:fs/promises';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';
import type { LogKind } from './log.ts';
import { writeLogCsv } from './log.ts';
import type { SampleManifest } from './manifest.ts';
import { buildManifest } from './manifest.ts';
import { csvToParquetSql, openOfflineDuckDB } from './parquet.ts';
import { V9, targetPolicyRows } from './policy.ts';
import { DEVICES, PROMOTIONS, REGIONS, TENURES, segmentParts } from './scenario.ts';

export const DEFAULT_SEED = 20260302;
/** 125k decisions keeps the four committed logs near 23 MB (the CSVs are ~83 bytes a row). */
export const DEFAULT_DECISIONS = 125_000;
export const SAMPLE_DATA_DIR = dirname(fileURLToPath(import.meta.url));
export const TARGET_POLICY_FILE = 'maple-row-v9-policy.csv';
const MAX_DECISIONS = 1_000_000_000;

export type OutputFormat = 'csv' | 'parquet';

export interface GenerateOptions {
  readonly decisions: number;
  readonly out: string;
  readonly seed: number;
  readonly formats: readonly OutputFormat[];
  readonly logs: readonly LogKind[];
}

export interface GeneratedFile {
  readonly path: string;
  readonly bytes: number;
}

export interface GenerateResult {
  readonly files: GeneratedFile[];
  readonly manifests: Partial<Record<LogKind, SampleManifest>>;
}

export const logFileName = (kind: LogKind, ext: string): string => `maple-row-${kind}.${ext}`;

/** Writes to a sibling ".partial" file and renames it into place, so an interrupted run leaves no half file under the real name. */
async function writeCsvStream(path: string, produce: (write: (text: string) => Promise<void>) => Promise<void>): Promise<void> {
  const partial = `${path}.partial`;
  const stream = createWriteStream(partial, { encoding: 'utf8', highWaterMark: 1 << 20 });
  const failed = new Promise<never>((_, reject) => stream.once('error', reject));
  const write = (text: string): Promise<void> => (stream.write(text)
    ? Promise.resolve()
    : Promise.race([new Promise<void>((done) => stream.once('drain', () => done())), failed]));
  try {
    await produce(write);
    await Promise.race([new Promise<void>((done) => stream.end(() => done())), failed]);
  } catch (error) {
    stream.destroy();
    await rm(partial, { force: true });
    throw error;
  }
  await rename(partial, path);
}

export function targetPolicyCsv(): string {
  const lines = ['region,device,tenure,promotion,probability'];
  for (const row of targetPolicyRows(V9)) {
    const { region, device, tenure } = segmentParts(row.segment);
    // String(x) is the shortest text that parses back to the same double, so sums are exact to the file.
    lines.push(`${REGIONS[region]},${DEVICES[device]},${TENURES[tenure]},${PROMOTIONS[row.action]},${String(row.probability)}`);
  }
  return `${lines.join('\n')}\n`;
}

export async function generateSampleData(options: GenerateOptions): Promise<GenerateResult> {
  const { decisions, seed, formats, logs } = options;
  const out = resolve(options.out);
  await mkdir(out, { recursive: true });
  const written: string[] = [];
  const manifests: Partial<Record<LogKind, SampleManifest>> = {};
  const duck = formats.includes('parquet') ? await openOfflineDuckDB() : null;
  let conversion: Promise<void> = Promise.resolve();
  try {
    for (const kind of logs) {
      const keepCsv = formats.includes('csv');
      const csvPath = join(out, keepCsv ? logFileName(kind, 'csv') : `.${logFileName(kind, 'tmp.csv')}`);
      let tally: Awaited<ReturnType<typeof writeLogCsv>> | undefined;
      await writeCsvStream(csvPath, async (write) => { tally = await writeLogCsv({ kind, decisions, seed, write }); });
      if (keepCsv) written.push(csvPath);
      const manifest = buildManifest(kind, seed, tally!);
      manifests[kind] = manifest;
      const manifestPath = join(out, logFileName(kind, 'manifest.json'));
      await writeFile(manifestPath, `${JSON.stringify(manifest, null, 2)}\n`);
      written.push(manifestPath);
      if (duck) {
        const parquetPath = join(out, logFileName(kind, 'parquet'));
        const previous = conversion;
        // The conversion runs on DuckDB's threads while the next log is generated on this one.
        conversion = previous.then(async () => {
          await duck.connection.run(csvToParquetSql(csvPath, `${parquetPath}.partial`));
          await rename(`${parquetPath}.partial`, parquetPath);
          if (!keepCsv) await rm(csvPath, { force: true });
        });
        conversion.catch(() => undefined);
        written.push(parquetPath);
      }
    }
    await conversion;
  } finally {
    await conversion.catch(() => undefined);
    duck?.close();
  }
  const policyPath = join(out, TARGET_POLICY_FILE);
  await writeFile(policyPath, targetPolicyCsv());
  written.push(policyPath);
  const files = await Promise.all(written.map(async (path) => ({ path, bytes: (await stat(path)).size })));
  return { files, manifests };
}

const USAGE = 'usage: node --import tsx sample-data/generate.ts [--rows N] [--out DIR] [--seed S] '
  + '[--formats parquet,csv] [--clean-only | --demo-only]\n'
  + '  --rows N     decisions per log (default 125000); the demo log adds round(0.3% of N) retried rows\n'
  + '  --out DIR    output folder (default: the sample-data folder)\n'
  + '  --seed S     unsigned 32-bit integer (default 20260302); the demo and clean logs share it\n'
  + '  --formats    comma-separated subset of parquet,csv (default both)';

export class UsageError extends Error {}

export function parseCommandLine(argv: readonly string[]): GenerateOptions {
  let parsed;
  try {
    parsed = parseArgs({
      args: [...argv],
      options: {
        rows: { type: 'string' }, out: { type: 'string' }, seed: { type: 'string' }, formats: { type: 'string' },
        'clean-only': { type: 'boolean' }, 'demo-only': { type: 'boolean' }, help: { type: 'boolean', short: 'h' },
      },
      strict: true, allowPositionals: false,
    });
  } catch (error) {
    throw new UsageError(`${(error as Error).message}\n${USAGE}`);
  }
  const v = parsed.values;
  if (v.help) throw new UsageError(USAGE);
  const integer = (text: string | undefined, name: string, fallback: number, min: number, max: number): number => {
    if (text === undefined) return fallback;
    if (!/^\d+$/.test(text.trim())) throw new UsageError(`--${name} must be a whole number, got "${text}"`);
    const n = Number(text.trim());
    if (n < min || n > max) throw new UsageError(`--${name} must be between ${min} and ${max}, got ${n}`);
    return n;
  };
  const decisions = integer(v.rows, 'rows', DEFAULT_DECISIONS, 1, MAX_DECISIONS);
  const seed = integer(v.seed, 'seed', DEFAULT_SEED, 0, 0xffffffff);
  const formats = (v.formats ?? 'parquet,csv').split(',').map((f) => f.trim().toLowerCase()).filter((f) => f !== '');
  const unknown = formats.filter((f) => f !== 'csv' && f !== 'parquet');
  if (unknown.length > 0 || formats.length === 0) {
    throw new UsageError(`--formats takes a comma-separated subset of parquet,csv, got "${v.formats ?? ''}"`);
  }
  if (v['clean-only'] && v['demo-only']) throw new UsageError('--clean-only and --demo-only exclude each other');
  const logs: LogKind[] = v['clean-only'] ? ['clean'] : v['demo-only'] ? ['demo'] : ['demo', 'clean', 'next'];
  return { decisions, seed, out: v.out ?? SAMPLE_DATA_DIR, formats: [...new Set(formats)] as OutputFormat[], logs };
}

async function main(): Promise<void> {
  let options: GenerateOptions;
  try {
    options = parseCommandLine(process.argv.slice(2));
  } catch (error) {
    if (!(error instanceof UsageError)) throw error;
    process.stderr.write(`${error.message}\n`);
    process.exitCode = 2;
    return;
  }
  const started = performance.now();
  const result = await generateSampleData(options);
  for (const file of result.files) process.stdout.write(`${(file.bytes / 1e6).toFixed(2).padStart(9)} MB  ${file.path}\n`);
  for (const [kind, manifest] of Object.entries(result.manifests)) {
    process.stdout.write(`${kind}: ${manifest.generator.rows} rows, ${manifest.defects.length} planted defects\n`);
  }
  process.stdout.write(`done in ${((performance.now() - started) / 1000).toFixed(1)} s\n`);
}

if (process.argv[1] !== undefined && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  main().catch((error: unknown) => {
    process.stderr.write(`sample-data: ${error instanceof Error ? error.message : String(error)}\n`);
    process.exitCode = 1;
  });
}
