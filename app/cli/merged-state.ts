/**
 * The merged state file of a parts folder (merged-N.bin; DEVELOPERS.md, "The merged state file"), in binary:
 * a preamble, a JSON header (the small things, the string table and the list of sections) and the columns as
 * typed arrays, so reading it is a few copies and writing it one buffer, not 5 MB of JSON text at every add.
 *
 *   bytes 0–7    magic "CWMERGED"
 *   bytes 8–11   format version (uint32, little-endian): MERGED_FORMAT
 *   bytes 12–15  header length H in bytes (uint32)
 *   bytes 16–47  SHA-256 of every byte from 48 to the end (header and sections)
 *   bytes 48–    the header, UTF-8 JSON; then zero bytes up to a multiple of 8; then each section in the header's
 *                order, its bytes padded with zeros to a multiple of 8
 *
 * A section is a column: f64 (Float64, little-endian: every double as it is, −0, NaN and ±∞ included), i32
 * (indexes into the header's string table, or cell numbers), or u8 (1 where a nullable number column is null).
 * Pure but for node:crypto.
 */
import { createHash } from 'node:crypto';
import type { Profile } from '../core/scan/profile.ts';
import type { Distincts, WeightGroups } from '../core/parts/merge.ts';
import type { MergedCube } from '../core/parts/merged.ts';
import { Entries, type EntryScales } from '../core/parts/replay.ts';
import { LIMBS } from '../core/parts/exact.ts';

export const MERGED_FORMAT = 2;
export const MERGED_SCHEMA = `counterweight.parts-merged/${MERGED_FORMAT}`;
const MAGIC = 'CWMERGED';
const PREAMBLE = 48;

type SectionType = 'f64' | 'i32' | 'u8';
const WIDTH: Record<SectionType, number> = { f64: 8, i32: 4, u8: 1 };

interface Section {
  readonly name: string;
  readonly type: SectionType;
  readonly length: number;
}

export interface MergedHeader {
  readonly schema: typeof MERGED_SCHEMA;
  readonly parts: readonly { readonly name: string; readonly sha256: string }[];
  readonly profile: Profile;
  /** the part counts at which the cube's entries were formed again from every part's groups (new scales) */
  readonly rebuilt_at: readonly number[];
  readonly segment_count: number;
  readonly has_copies: boolean;
  readonly cube: { readonly width: number; readonly scales: EntryScales; readonly cells: number; readonly entries: number } | null;
  readonly strings: readonly string[];
  readonly sections: readonly Section[];
}

export interface MergedContent {
  readonly parts: MergedHeader['parts'];
  readonly profile: Profile;
  readonly distincts: Distincts;
  readonly weights: WeightGroups;
  readonly copies: ReadonlyMap<string, number> | null;
  readonly cube: MergedCube | null;
  readonly rebuiltAt: readonly number[];
}

/** The file is not a merged state this version can read: damaged, cut short, or of another format version. */
export class MergedStateError extends Error {}

const pad8 = (n: number) => (n + 7) & ~7;

/** The merged state as the bytes of merged-N.bin (no cube when its sums hold a BigInt part: then the audit replays the parts). */
export function encodeMerged(m: MergedContent): Uint8Array {
  const strings: string[] = [];
  const at = new Map<string, number>();
  const str = (values: readonly string[]) => {
    const out = new Int32Array(values.length);
    for (let i = 0; i < values.length; i++) {
      const v = values[i] as string;
      let k = at.get(v);
      if (k === undefined) {
        at.set(v, (k = strings.length));
        strings.push(v);
      }
      out[i] = k;
    }
    return out;
  };
  const sections: Section[] = [];
  const data: ArrayBufferView[] = [];
  const put = (name: string, type: SectionType, view: Float64Array | Int32Array | Uint8Array) => {
    sections.push({ name, type, length: view.length });
    data.push(view);
  };
  /** a number column; a null mask only when a value is null */
  const num = (name: string, values: readonly (number | null)[]) => {
    const out = new Float64Array(values.length);
    let mask: Uint8Array | null = null;
    for (let i = 0; i < values.length; i++) {
      const v = values[i];
      if (v === null || v === undefined) (mask ??= new Uint8Array(values.length))[i] = 1;
      else out[i] = v;
    }
    put(name, 'f64', out);
    if (mask) put(`${name}.null`, 'u8', mask);
  };
  m.distincts.segments.forEach((s, i) => put(`distincts.segments.${i}`, 'i32', str(s)));
  num('distincts.p', m.distincts.p);
  m.weights.segments.forEach((s, i) => put(`weights.segments.${i}`, 'i32', str(s)));
  put('weights.action', 'i32', str(m.weights.action));
  num('weights.p', m.weights.p);
  num('weights.r', m.weights.r);
  num('weights.rows', m.weights.rows);
  if (m.copies) {
    put('copies.id', 'i32', str([...m.copies.keys()]));
    num('copies.rows', [...m.copies.values()]);
  }
  let cube: MergedHeader['cube'] = null;
  const e = m.cube?.entries;
  if (m.cube && e && !e.sums.hasBig()) {
    const cells = e.cells;
    const segCount = cells[0]?.segment.length ?? 0;
    for (let i = 0; i < segCount; i++) put(`cells.segments.${i}`, 'i32', str(cells.map((c) => c.segment[i] as string)));
    put('cells.action', 'i32', str(cells.map((c) => c.action)));
    put('cells.version', 'i32', str(cells.map((c) => c.version)));
    num('cells.bucket', cells.map((c) => c.bucket));
    put('entries.cell', 'i32', Int32Array.from(e.cell));
    num('entries.p', e.p);
    num('entries.c', e.c);
    num('entries.c_r', e.cr);
    put('entries.limbs', 'f64', e.sums.limbs.subarray(0, 2 * e.length * LIMBS));
    cube = { width: m.cube.width, scales: e.scales, cells: cells.length, entries: e.length };
  }
  const header: MergedHeader = { schema: MERGED_SCHEMA, parts: m.parts, profile: m.profile, rebuilt_at: m.rebuiltAt, segment_count: m.weights.segments.length, has_copies: !!m.copies, cube, strings, sections };
  const headerBytes = new TextEncoder().encode(JSON.stringify(header));
  let size = pad8(PREAMBLE + headerBytes.length);
  for (const d of data) size += pad8(d.byteLength);
  const out = new Uint8Array(size);
  out.set(new TextEncoder().encode(MAGIC), 0);
  const dv = new DataView(out.buffer);
  dv.setUint32(8, MERGED_FORMAT, true);
  dv.setUint32(12, headerBytes.length, true);
  out.set(headerBytes, PREAMBLE);
  let o = pad8(PREAMBLE + headerBytes.length);
  for (const d of data) {
    out.set(new Uint8Array(d.buffer, d.byteOffset, d.byteLength), o);
    o += pad8(d.byteLength);
  }
  out.set(createHash('sha256').update(out.subarray(PREAMBLE)).digest(), 16);
  return out;
}

/** Whether the bytes are a merged state of an earlier tool, in JSON (merged-N.json, counterweight.parts-merged/1). */
export const isJsonMerged = (bytes: Uint8Array) => bytes[0] === 0x7b;

/** The header alone, checked (magic, format version, length, SHA-256). */
export function mergedHeader(bytes: Uint8Array, file: string): MergedHeader {
  const fail = (why: string): never => {
    throw new MergedStateError(`${file} is not a merged state this counterweight can read (${why}): delete it, and the audit reads every part again; the next --add-part writes it anew`);
  };
  if (bytes.length < PREAMBLE || new TextDecoder().decode(bytes.subarray(0, 8)) !== MAGIC) fail('no merged state header');
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const version = dv.getUint32(8, true);
  if (version !== MERGED_FORMAT) fail(`format version ${version}, this reads ${MERGED_FORMAT}`);
  const h = dv.getUint32(12, true);
  if (PREAMBLE + h > bytes.length) fail('cut short');
  const digest = createHash('sha256').update(bytes.subarray(PREAMBLE)).digest();
  if (!digest.equals(bytes.subarray(16, PREAMBLE))) fail('its bytes do not match their SHA-256: damaged or cut short');
  let header: MergedHeader;
  try {
    header = JSON.parse(new TextDecoder().decode(bytes.subarray(PREAMBLE, PREAMBLE + h))) as MergedHeader;
  } catch {
    return fail('a header that is not JSON');
  }
  if (header.schema !== MERGED_SCHEMA) fail(`schema ${JSON.stringify(header.schema)}, expected ${MERGED_SCHEMA}`);
  let size = pad8(PREAMBLE + h);
  for (const s of header.sections) size += pad8(s.length * WIDTH[s.type]);
  if (size !== bytes.length) fail(`${bytes.length} bytes where its sections take ${size}`);
  return header;
}

/** The merged state from the bytes of merged-N.bin (MergedStateError where they are not one). */
export function decodeMerged(input: Uint8Array, file: string): MergedContent {
  const header = mergedHeader(input, file);
  // typed-array views need their offsets aligned: a buffer not starting at a multiple of 8 is copied once
  const bytes = input.byteOffset % 8 === 0 ? input : input.slice();
  const views = new Map<string, Float64Array | Int32Array | Uint8Array>();
  let o = pad8(PREAMBLE + new DataView(bytes.buffer, bytes.byteOffset).getUint32(12, true));
  for (const s of header.sections) {
    const at = bytes.byteOffset + o;
    views.set(s.name, s.type === 'f64' ? new Float64Array(bytes.buffer, at, s.length) : s.type === 'i32' ? new Int32Array(bytes.buffer, at, s.length) : new Uint8Array(bytes.buffer, at, s.length));
    o += pad8(s.length * WIDTH[s.type]);
  }
  const section = <T extends Float64Array | Int32Array | Uint8Array>(name: string): T => {
    const v = views.get(name);
    if (!v) throw new MergedStateError(`${file} has no ${name} section: damaged`);
    return v as T;
  };
  const strings = header.strings;
  const str = (name: string): string[] => {
    const v = section<Int32Array>(name);
    const out = new Array<string>(v.length);
    for (let i = 0; i < v.length; i++) {
      const s = strings[v[i] as number];
      if (s === undefined) throw new MergedStateError(`${file}: ${name} points past the string table: damaged`);
      out[i] = s;
    }
    return out;
  };
  const num = (name: string): (number | null)[] => {
    const v = section<Float64Array>(name);
    const mask = views.get(`${name}.null`);
    const out = Array.from(v) as (number | null)[];
    if (mask) for (let i = 0; i < mask.length; i++) if (mask[i]) out[i] = null;
    return out;
  };
  const segs = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => str(`${prefix}.${i}`));
  const n = header.segment_count;
  const distincts: Distincts = { segments: segs('distincts.segments', n), p: num('distincts.p') as number[] };
  const weights: WeightGroups = { segments: segs('weights.segments', n), action: str('weights.action'), p: num('weights.p') as number[], r: num('weights.r'), rows: num('weights.rows') as number[] };
  let copies: Map<string, number> | null = null;
  if (header.has_copies) {
    const ids = str('copies.id');
    const rows = section<Float64Array>('copies.rows');
    copies = new Map();
    for (let i = 0; i < ids.length; i++) copies.set(ids[i] as string, rows[i] as number);
  }
  let cube: MergedCube | null = null;
  if (header.cube) {
    const entries = new Entries(header.cube.scales);
    const cellSegs = segs('cells.segments', header.cube.cells === 0 ? 0 : n);
    const action = str('cells.action');
    const version = str('cells.version');
    const bucket = section<Float64Array>('cells.bucket');
    for (let c = 0; c < action.length; c++) entries.cells.push({ segment: cellSegs.map((s) => s[c] as string), action: action[c] as string, version: version[c] as string, bucket: bucket[c] as number });
    const cell = section<Int32Array>('entries.cell');
    const limbs = section<Float64Array>('entries.limbs');
    if (cell.length !== header.cube.entries || limbs.length !== 2 * LIMBS * cell.length || action.length !== header.cube.cells) throw new MergedStateError(`${file}: the cube's sections disagree in length: damaged`);
    entries.load(Array.from(cell), num('entries.p'), Array.from(section<Float64Array>('entries.c')), Array.from(section<Float64Array>('entries.c_r')), limbs);
    cube = { width: header.cube.width, entries };
  }
  return { parts: header.parts, profile: header.profile, distincts, weights, copies, cube, rebuiltAt: header.rebuilt_at };
}
