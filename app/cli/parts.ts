/**
 * The parts folder of `counterweight audit --parts DIR [--add-part FILE]` (README, "Audits merged from parts"):
 * parts.json (roles, targets and settings every part is read with, and the parts so far) and, per part,
 * NAME.part.json (profile, uncapped cube, weight groups, ids repeated within the part), NAME.hashes (its
 * distinct id hashes, ascending, 8 bytes each, little-endian) and NAME.ids.json (its ids by hash, read only
 * when a hash is shared with another part). Files are written beside their name and renamed into place.
 */
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import type { AuditCore } from './commands/core.ts';
import type { AuditScans, RoleInspection, TargetInput } from '../core/audit.ts';
import type { InputFile, Report } from '../core/model/report.ts';
import type { RoleOverrides } from '../core/roles/roles.ts';
import type { Profile } from '../core/scan/profile.ts';
import { clipOf, duplicatesOf, mergeGroups, mergeProfiles, tailOf, weightGroupsOf, withExactDistincts, type PartIds } from '../core/parts/merge.ts';
import type { RowGroups } from '../core/parts/replay.ts';
import type { PartScan } from '../core/parts/scan.ts';
import { TOOL_VERSION } from '../core/version.ts';
import type { Table } from '../core/table.ts';
import type { Engine } from '../engine/types.ts';
import { fingerprintFiles } from '../report/fingerprint.ts';
import { UsageError } from './errors.ts';

const STATE_SCHEMA = 'counterweight.parts/1';
const PART_SCHEMA = 'counterweight.part/2';

export interface PartsState {
  readonly schema: typeof STATE_SCHEMA;
  readonly tool_version: string;
  readonly roles: RoleOverrides;
  readonly targets: readonly TargetInput[];
  readonly settings: Readonly<Record<string, number | string | boolean>>;
  readonly format: string;
  readonly parts: readonly (InputFile & { readonly name: string; readonly rows: number; readonly time_range?: readonly [number, number] | null })[];
}

interface PartFile {
  readonly schema: typeof PART_SCHEMA;
  readonly name: string;
  readonly profile: Profile;
  readonly bucket_us: number;
  /** the row groups, with a propensity that JSON cannot hold (NaN, ±∞) written as its text */
  readonly groups: Omit<RowGroups, 'p'> & { readonly p: readonly (number | string | null)[] };
  readonly repeated: readonly (readonly [string, number])[];
}

function writeAtomically(file: string, data: string | Uint8Array): void {
  const partial = `${file}.${process.pid}.partial`;
  writeFileSync(partial, data);
  renameSync(partial, file);
}

const stateFile = (dir: string) => path.join(dir, 'parts.json');

export function readState(dir: string): PartsState | null {
  const file = stateFile(dir);
  if (!existsSync(file)) return null;
  const state = JSON.parse(readFileSync(file, 'utf8')) as PartsState;
  if (state.schema !== STATE_SCHEMA) throw new UsageError(`${file} is not a parts folder's state (schema ${JSON.stringify(state.schema)}, expected ${STATE_SCHEMA})`);
  if (state.tool_version !== TOOL_VERSION) throw new UsageError(`the parts in ${dir} were read by counterweight ${state.tool_version}; this is ${TOOL_VERSION}: read them again into a new folder`);
  return state;
}

/** The state for the first part, or the folder's: the same roles, targets and settings for every part. */
export function stateFor(dir: string, given: { roles: RoleOverrides; targets: readonly TargetInput[]; settings: Readonly<Record<string, number | string | boolean>> | undefined; format: string }): PartsState {
  const state = readState(dir);
  if (!state) return { schema: STATE_SCHEMA, tool_version: TOOL_VERSION, roles: given.roles, targets: given.targets, settings: given.settings ?? {}, format: given.format, parts: [] };
  const differs = (a: unknown, b: unknown) => JSON.stringify(a) !== JSON.stringify(b);
  const recorded = state.roles as Record<string, unknown>;
  if (Object.entries(given.roles).some(([k, v]) => differs(v, recorded[k]))) throw new UsageError(`the parts in ${dir} are read with the roles ${JSON.stringify(state.roles)}; give no --role/--segments, or the same ones`);
  if (given.targets.length && differs(given.targets, state.targets)) throw new UsageError(`the parts in ${dir} are audited with the targets ${state.targets.map((t) => t.spec).join(', ') || '(the implicit ones)'}; give no --target, or the same ones`);
  if (given.settings && differs(given.settings, state.settings)) throw new UsageError(`the parts in ${dir} are audited with the settings ${JSON.stringify(state.settings)}; give no --settings, or the same ones`);
  if (given.format !== state.format) throw new UsageError(`the parts in ${dir} are ${state.format} files; this part is ${given.format}`);
  return state;
}

/** The time range of the parts so far, from the state (null when none has a time). */
export function rangeSoFar(state: PartsState): [number, number] | null {
  const ranges = state.parts.map((p) => p.time_range).filter((r): r is readonly [number, number] => !!r);
  return ranges.length ? [Math.min(...ranges.map((r) => r[0])), Math.max(...ranges.map((r) => r[1]))] : null;
}

/** Stores one part's scan and adds it to the state (refusing a part added before, by name or content). */
export function storePart(dir: string, state: PartsState, file: InputFile, scan: PartScan): PartsState {
  const name = path.basename(file.path);
  const before = state.parts.find((p) => p.name === name || p.sha256 === file.sha256);
  if (before) throw new UsageError(`the part ${file.path} is already in ${dir} (as ${before.name}, sha256 ${before.sha256.slice(0, 12)}…)`);
  mkdirSync(dir, { recursive: true });
  const ids = scan.ids;
  const repeated: [string, number][] = [];
  let hashes = new BigUint64Array(0);
  const start: number[] = [];
  if (ids) {
    const distinct: bigint[] = [];
    ids.hashes.forEach((h, i) => {
      if (i === 0 || h !== ids.hashes[i - 1]) {
        distinct.push(h);
        start.push(i);
      }
      if ((ids.rows[i] as number) > 1) repeated.push([ids.ids[i] as string, ids.rows[i] as number]);
    });
    start.push(ids.hashes.length);
    hashes = BigUint64Array.from(distinct);
  }
  const groups = { ...scan.groups, p: scan.groups.p.map((p) => (p === null || Number.isFinite(p) ? p : String(p))) };
  const part: PartFile = { schema: PART_SCHEMA, name, profile: scan.profile, bucket_us: scan.bucketUs, groups, repeated };
  writeAtomically(path.join(dir, `${name}.hashes`), new Uint8Array(hashes.buffer));
  writeAtomically(path.join(dir, `${name}.ids.json`), JSON.stringify({ start, ids: ids?.ids ?? [], rows: ids?.rows ?? [] }));
  writeAtomically(path.join(dir, `${name}.part.json`), JSON.stringify(part));
  const next: PartsState = { ...state, parts: [...state.parts, { ...file, name, rows: scan.profile.rows, time_range: scan.timeRange }] };
  writeAtomically(stateFile(dir), `${JSON.stringify(next, null, 2)}\n`);
  return next;
}

function readPartIds(dir: string, name: string, repeated: readonly (readonly [string, number])[]): PartIds {
  const bytes = readFileSync(path.join(dir, `${name}.hashes`));
  const hashes = new BigUint64Array(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength));
  let byHash: { start: number[]; ids: string[]; rows: number[] } | null = null;
  return {
    hashes,
    repeated: new Map(repeated),
    idsAt(i) {
      byHash ??= JSON.parse(readFileSync(path.join(dir, `${name}.ids.json`), 'utf8')) as { start: number[]; ids: string[]; rows: number[] };
      const from = byHash.start[i] as number;
      const to = byHash.start[i + 1] as number;
      return byHash.ids.slice(from, to).map((id, k) => [id, byHash?.rows[from + k] as number] as const);
    },
  };
}

/** The audit of every part in the folder together, from their stored scans: no part is read again. */
/**
 * Where a merged audit reads its findings' example rows: the part files recorded in the state, again, when
 * every one is where it was with the same SHA-256, as one log (the whole log's example statement over the
 * same rows gives the same rows); null otherwise (a file moved, changed or gone, or a part read off a server).
 */
export interface PartExamples {
  readonly cwd: string;
  readonly open: () => Promise<Engine>;
}

async function partExamples(state: PartsState, from: PartExamples, sql: (relation: string) => string): Promise<Table | null> {
  const files = state.parts.map((p) => path.resolve(from.cwd, p.path));
  if (!files.every((f) => existsSync(f))) return null;
  const now = await fingerprintFiles(files, from.cwd);
  if (now.some((f, i) => f.sha256 !== state.parts[i]?.sha256)) return null;
  const engine = await from.open();
  try {
    const source = await engine.register({ kind: 'path', paths: files });
    return await engine.query(sql(source.relation));
  } finally {
    await engine.close();
  }
}

export async function auditParts(core: AuditCore, dir: string, state: PartsState, peakRssMb?: () => number, examplesFrom?: PartExamples): Promise<{ report: Report; columns: readonly { name: string; type: string }[] }> {
  if (state.parts.length === 0) throw new UsageError(`${dir} holds no parts yet: add one with --add-part FILE`);
  const parts = state.parts.map((p) => {
    const file = JSON.parse(readFileSync(path.join(dir, `${p.name}.part.json`), 'utf8')) as PartFile;
    if (file.schema !== PART_SCHEMA) throw new UsageError(`${p.name}.part.json in ${dir} is not a ${PART_SCHEMA} part: read the parts again into a new folder`);
    return { ...file, groups: { ...file.groups, p: file.groups.p.map((v) => (typeof v === 'string' ? Number(v) : v)) } as RowGroups };
  });
  const segmentColumns = state.roles.segments ?? [];
  const rowGroups = parts.map((p) => ({ groups: p.groups, bucketUs: p.bucket_us }));
  const profile = withExactDistincts(mergeProfiles(parts.map((p) => p.profile)), segmentColumns, state.roles.propensity ?? null, parts.map((p) => p.groups));
  let weights: ReturnType<typeof weightGroupsOf>[] | null = null;
  const groups = () => (weights ??= parts.map((p) => weightGroupsOf(p.groups)));
  const scans: AuditScans = {
    cube: ({ capped, cap, buckets, reward, floor, byPropensity, rowCount }) => mergeGroups(rowGroups, buckets, { reward, floor, byPropensity, rowCount }, capped, cap),
    duplicates: (examples) => duplicatesOf(parts.map((p) => readPartIds(dir, p.name, p.repeated)), examples),
    tail: (target, segs, actions, limit) => tailOf(groups(), target, segs, actions, limit),
    clip: (target, segs, actions, above, limit) => clipOf(groups(), target, segs, actions, above, limit),
    ...(examplesFrom ? { examples: (sql: (relation: string) => string) => partExamples(state, examplesFrom, sql) } : {}),
  };
  const inspection = { profile, evidence: { columns: [] }, suggestions: [], queries: { profile: [], evidence: [] } } as unknown as RoleInspection;
  const report = await core.runAudit(() => Promise.reject(new Error('an audit merged from parts reads no log')), {
    relation: 'log',
    input: { files: state.parts.map(({ path: p, bytes, sha256 }) => ({ path: p, bytes, sha256 })), format: state.format },
    roles: state.roles,
    targets: state.targets,
    settings: state.settings,
    inspection,
    scans,
    engine: 'parts',
    ...(peakRssMb ? { peakRssMb } : {}),
  });
  return { report, columns: profile.columns.map((c) => ({ name: c.name, type: c.type })) };
}
