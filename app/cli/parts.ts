/**
 * The parts folder of `counterweight audit --parts DIR [--add-part FILE]` (README, "Audits merged from parts"):
 * parts.json (roles, targets and settings every part is read with, and the parts so far) and, per part,
 * NAME.part.json (profile, uncapped cube, weight groups, ids repeated within the part), NAME.hashes (its
 * distinct id hashes, ascending, 8 bytes each, little-endian) and NAME.ids.json (its ids by hash, read only
 * when a hash is shared with another part). Files are written beside their name and renamed into place.
 */
import { existsSync, mkdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import type { AuditCore } from './commands/core.ts';
import type { AuditScans, RoleInspection, TargetInput } from '../core/audit.ts';
import type { InputFile, Report } from '../core/model/report.ts';
import type { RoleOverrides } from '../core/roles/roles.ts';
import type { Profile } from '../core/scan/profile.ts';
import { addDistincts, clipOf, copiesOf, duplicatesFromCopies, mergeGroups, mergeProfiles, tailOf, weightGroupsOf, withDistincts, type Distincts, type PartIds, type WeightGroups } from '../core/parts/merge.ts';
import { addPartIds, addPartToCube, addWeightGroups, coarsened, cubeFromMerged, cubeOfParts, cubeScales, sameScales, type MergedCube } from '../core/parts/merged.ts';
import { decodeMerged, encodeMerged, isJsonMerged, MergedStateError, type MergedContent } from './merged-state.ts';
import { rewardShift } from '../core/scan/cube.ts';
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
  /** the merged state of every part (merged-N.bin, merged-state.ts), when one was written with the last part */
  readonly merged?: string;
}

/**
 * The merged state of the parts listed (app/core/parts/merged.ts) is kept in merged-N.bin (merged-state.ts): what
 * the audit of them all needs, so that neither adding a part nor auditing reads the earlier parts' files. Written
 * with each part, under a name of its own, and used only when its parts are exactly the state's.
 */
export type Merged = Omit<MergedContent, 'parts' | 'copies'> & { readonly copies: Map<string, number> | null };

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
  try {
    writeFileSync(partial, data);
    renameSync(partial, file);
  } catch (e) {
    try { rmSync(partial, { force: true }); } catch { /* the write's own error is the one to report */ }
    throw e;
  }
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

function readPartFile(dir: string, name: string): PartFile & { readonly rowGroups: RowGroups } {
  const file = JSON.parse(readFileSync(path.join(dir, `${name}.part.json`), 'utf8')) as PartFile;
  if (file.schema !== PART_SCHEMA) throw new UsageError(`${name}.part.json in ${dir} is not a ${PART_SCHEMA} part: read the parts again into a new folder`);
  return { ...file, rowGroups: { ...file.groups, p: file.groups.p.map((v) => (typeof v === 'string' ? Number(v) : v)) } as RowGroups };
}

/**
 * The folder's merged state, when it covers exactly the state's parts (null otherwise, and for a merged-N.json
 * of an earlier tool: then the parts are read, and the next add writes merged-N.bin). A damaged file is an error.
 */
export function readMerged(dir: string, state: PartsState): Merged | null {
  if (!state.merged) return null;
  const file = path.join(dir, state.merged);
  if (!existsSync(file)) return null;
  const bytes = readFileSync(file);
  if (isJsonMerged(bytes)) return null;
  let m: ReturnType<typeof decodeMerged>;
  try {
    m = decodeMerged(bytes, file);
  } catch (e) {
    if (e instanceof MergedStateError) throw new UsageError(e.message);
    throw e;
  }
  if (m.parts.length !== state.parts.length || m.parts.some((p, i) => p.name !== state.parts[i]?.name || p.sha256 !== state.parts[i]?.sha256)) return null;
  return { profile: m.profile, distincts: m.distincts, weights: m.weights, copies: m.copies ? new Map(m.copies) : null, cube: m.cube, rebuiltAt: m.rebuiltAt };
}

function mergedFile(parts: PartsState['parts'], m: Merged): Uint8Array {
  return encodeMerged({ ...m, parts: parts.map((p) => ({ name: p.name, sha256: p.sha256 })) });
}

/** The scales the cube's entries are kept at for a merged profile (null: no finite reward range, or no reward). */
function scalesFor(state: PartsState, profile: Profile) {
  return cubeScales(profile, rewardShift(profile.columns.find((c) => c.name === state.roles.reward)));
}

/**
 * The merged state with one more part: from the previous merged state and the new part alone when there is one,
 * else from every part's files. The cube's entries are formed again from every part's groups only when the new
 * log's scales differ from theirs.
 */
function nextMerged(dir: string, state: PartsState, prev: Merged | null, scan: PartScan, ids: PartIds | null): Merged {
  const groups = { groups: scan.groups, bucketUs: scan.bucketUs };
  const earlier = () => state.parts.map((p) => readPartFile(dir, p.name));
  if (!prev) {
    const files = earlier();
    const profile = mergeProfiles([...files.map((f) => f.profile), scan.profile]);
    const all = [...files.map((f) => ({ groups: f.rowGroups, bucketUs: f.bucket_us })), groups];
    const scales = scalesFor(state, profile);
    const copies = ids ? copiesOf([...state.parts.map((p, i) => readPartIds(dir, p.name, files[i]?.repeated ?? [])), ids]) : null;
    return {
      profile,
      distincts: all.reduce<Distincts | null>((d, g) => addDistincts(d, g.groups), null) as Distincts,
      weights: all.reduce<WeightGroups | null>((w, g) => addWeightGroups(w, weightGroupsOf(g.groups)), null) as WeightGroups,
      copies,
      cube: scales ? cubeOfParts(all, Math.max(...all.map((g) => g.bucketUs)), scales) : null,
      rebuiltAt: [state.parts.length + 1],
    };
  }
  const profile = mergeProfiles([prev.profile, scan.profile]);
  let copies: Map<string, number> | null = null;
  if (ids) {
    copies = new Map(prev.copies ?? []);
    addPartIds(copies, state.parts.map((p) => () => readPartIds(dir, p.name, [])), ids);
  }
  const scales = scalesFor(state, profile);
  let cube: MergedCube | null = prev.cube;
  let rebuiltAt = prev.rebuiltAt;
  if (cube && scales && sameScales(cube.entries.scales, scales)) {
    if (scan.bucketUs > cube.width && scan.bucketUs % cube.width === 0) cube = coarsened(cube, scan.bucketUs);
    if (!addPartToCube(cube, groups)) cube = null;
  } else cube = null;
  if (!cube && scales) {
    const all = [...earlier().map((f) => ({ groups: f.rowGroups, bucketUs: f.bucket_us })), groups];
    cube = cubeOfParts(all, Math.max(...all.map((g) => g.bucketUs)), scales);
    rebuiltAt = [...rebuiltAt, state.parts.length + 1];
  }
  return { profile, distincts: addDistincts(prev.distincts, scan.groups), weights: addWeightGroups(prev.weights, weightGroupsOf(scan.groups)), copies, cube, rebuiltAt };
}

/**
 * Stores one part's scan and adds it to the state (refusing a part added before, by name or content), with the
 * merged state of all parts so far. Every file is written under a temporary name and renamed; parts.json is
 * written last and is what makes the part part of the folder: if anything fails before it, the files this call
 * wrote are removed, so the folder is as it was.
 */
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
  const partIds: PartIds | null = ids ? idsOf(hashes, new Map(repeated), () => ({ start, ids: ids.ids as string[], rows: ids.rows as number[] })) : null;
  const prev = readMerged(dir, state);
  const merged = nextMerged(dir, state, prev, scan, partIds);
  const next: PartsState = { ...state, parts: [...state.parts, { ...file, name, rows: scan.profile.rows, time_range: scan.timeRange }], merged: `merged-${state.parts.length + 1}.bin` };
  const written: string[] = [];
  const write = (f: string, data: string | Uint8Array) => {
    written.push(f);
    writeAtomically(f, data);
  };
  try {
    write(path.join(dir, `${name}.hashes`), new Uint8Array(hashes.buffer));
    write(path.join(dir, `${name}.ids.json`), JSON.stringify({ start, ids: ids?.ids ?? [], rows: ids?.rows ?? [] }));
    write(path.join(dir, `${name}.part.json`), JSON.stringify(part));
    write(path.join(dir, next.merged as string), mergedFile(next.parts, merged));
    writeAtomically(stateFile(dir), `${JSON.stringify(next, null, 2)}\n`);
  } catch (e) {
    for (const f of written) rmSync(f, { force: true });
    throw e;
  }
  if (state.merged && state.merged !== next.merged) rmSync(path.join(dir, state.merged), { force: true });
  return next;
}

/** A part's ids from its distinct hashes and its ids by hash (`byHash` read only when a hash is shared). */
function idsOf(hashes: BigUint64Array, repeated: ReadonlyMap<string, number>, byHash: () => { start: number[]; ids: string[]; rows: number[] }): PartIds {
  let loaded: { start: number[]; ids: string[]; rows: number[] } | null = null;
  return {
    hashes,
    repeated,
    idsAt(i) {
      const b = (loaded ??= byHash());
      const from = b.start[i] as number;
      const to = b.start[i + 1] as number;
      return b.ids.slice(from, to).map((id, k) => [id, b.rows[from + k] as number] as const);
    },
  };
}

function readPartIds(dir: string, name: string, repeated: readonly (readonly [string, number])[]): PartIds {
  const bytes = readFileSync(path.join(dir, `${name}.hashes`));
  const hashes = new BigUint64Array(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength));
  return idsOf(hashes, new Map(repeated), () => JSON.parse(readFileSync(path.join(dir, `${name}.ids.json`), 'utf8')) as { start: number[]; ids: string[]; rows: number[] });
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

export async function auditParts(core: AuditCore, dir: string, state: PartsState, peakRssMb?: () => number, examplesFrom?: PartExamples, useMerged = true): Promise<{ report: Report; columns: readonly { name: string; type: string }[] }> {
  if (state.parts.length === 0) throw new UsageError(`${dir} holds no parts yet: add one with --add-part FILE`);
  let files: ReturnType<typeof readPartFile>[] | null = null;
  const parts = () => (files ??= state.parts.map((p) => readPartFile(dir, p.name)));
  const segmentColumns = state.roles.segments ?? [];
  const merged = useMerged ? readMerged(dir, state) : null;
  const fromParts = (spec: Parameters<AuditScans['cube']>[0]) => mergeGroups(parts().map((p) => ({ groups: p.rowGroups, bucketUs: p.bucket_us })), spec.buckets, { reward: spec.reward, floor: spec.floor, byPropensity: spec.byPropensity, rowCount: spec.rowCount }, spec.capped, spec.cap);
  const distincts = merged?.distincts ?? parts().reduce<Distincts | null>((d, p) => addDistincts(d, p.rowGroups), null) as Distincts;
  const profile = withDistincts(merged?.profile ?? mergeProfiles(parts().map((p) => p.profile)), segmentColumns, state.roles.propensity ?? null, distincts);
  let weights: WeightGroups[] | null = merged ? [merged.weights] : null;
  const groups = () => (weights ??= parts().map((p) => weightGroupsOf(p.rowGroups)));
  const scans: AuditScans = {
    cube: (spec) => (merged?.cube ? cubeFromMerged(merged.cube, spec.buckets, { reward: spec.reward, floor: spec.floor, byPropensity: spec.byPropensity, rowCount: spec.rowCount }, spec.capped, spec.cap) : null) ?? fromParts(spec),
    duplicates: (examples) => duplicatesFromCopies(merged?.copies ?? copiesOf(parts().map((p) => readPartIds(dir, p.name, p.repeated))), examples),
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
