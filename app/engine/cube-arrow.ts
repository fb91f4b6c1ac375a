/**
 * The cube as Arrow IPC (stream format): how it crosses from the engine host to the page and how it is
 * loaded into the page's DuckDB-Wasm as table `cube` (DEVELOPERS.md, "The desktop data path"). Browser-safe: apache-arrow only.
 *
 * One row per CubeCell. `segment` is a list of strings (the cube's segment-column order, so SQL reads
 * `segment[1]`, `segment[2]`, ...), every count and sum a DOUBLE: a JS number is a double, so counts,
 * NaN, ±Infinity and -0 all survive exactly. minP/maxP are nullable. The target-column sums appear as
 * `target_<field>` columns only when some cell carries them; a row whose `target_nInvalid` is null has none.
 */
import { Field, Float64, List, makeData, makeVector, Table, tableFromIPC, tableToIPC, Type, Utf8, Vector } from 'apache-arrow';
import type { Data } from 'apache-arrow';
import type { CubeCell, TargetColumnSums } from '../core/cube/types.ts';

/** Count and sum fields of a cell, in column order; every one is a number. */
export const CUBE_NUMBER_FIELDS = [
  'bucket', 'n', 'nPNull', 'nPNaN', 'nPNonPositive', 'nPAboveOne', 'nPBelowFloor', 'nPInvalid', 'nPOne', 'nRNull', 'nP', 'sumInvP', 'sumInvP2',
  'nRw', 'sumInvPRw', 'sumInvP2Rw', 'sumR', 'sumR2', 'sumRInvP', 'sumRInvP2', 'sumR2InvP2', 'nRAll', 'sumRAll', 'sumR2All',
] as const satisfies readonly (keyof CubeCell)[];
const NULLABLE_FIELDS = ['minP', 'maxP'] as const satisfies readonly (keyof CubeCell)[];
const TARGET_FIELDS = ['nInvalid', 'sumW', 'sumW2', 'sumWRw', 'sumW2Rw', 'sumWR', 'sumW2R', 'sumW2R2'] as const satisfies readonly (keyof TargetColumnSums)[];

type NumberField = (typeof CUBE_NUMBER_FIELDS)[number];

function doubles(values: Float64Array, valid?: readonly boolean[]): Vector {
  if (!valid) return makeVector(values);
  const bitmap = new Uint8Array(Math.ceil(values.length / 8));
  let nullCount = 0;
  valid.forEach((ok, i) => {
    if (ok) bitmap[i >> 3] = (bitmap[i >> 3] as number) | (1 << (i & 7));
    else nullCount++;
  });
  return new Vector([makeData({ type: new Float64(), length: values.length, data: values, nullBitmap: bitmap, nullCount })]);
}

/** Utf8 data built directly (the cube repeats a few dozen distinct strings, each encoded once). */
function utf8Data(values: readonly string[]): Data<Utf8> {
  const encoder = new TextEncoder();
  const encoded = new Map<string, Uint8Array>();
  const parts = values.map((v) => {
    let bytes = encoded.get(v);
    if (!bytes) encoded.set(v, (bytes = encoder.encode(v)));
    return bytes;
  });
  const valueOffsets = new Int32Array(values.length + 1);
  let total = 0;
  parts.forEach((p, i) => { total += p.length; valueOffsets[i + 1] = total; });
  const data = new Uint8Array(total);
  parts.forEach((p, i) => data.set(p, valueOffsets[i] as number));
  return makeData({ type: new Utf8(), length: values.length, valueOffsets, data });
}

function strings(values: readonly string[]): Vector {
  return new Vector([utf8Data(values)]);
}

function stringLists(lists: readonly (readonly string[])[]): Vector {
  const valueOffsets = new Int32Array(lists.length + 1);
  lists.forEach((l, i) => { valueOffsets[i + 1] = (valueOffsets[i] as number) + l.length; });
  const child = utf8Data(lists.flat());
  return new Vector([makeData({ type: new List(new Field('item', new Utf8(), false)), length: lists.length, valueOffsets, child })]);
}

function readStrings(data: Data<Utf8>, into: string[]): void {
  const decoder = new TextDecoder();
  const { valueOffsets, values } = data;
  const start = valueOffsets[0] as number;
  const whole = decoder.decode(values.subarray(start, valueOffsets[data.length] as number));
  // One decode for the whole buffer when it is ASCII (byte offsets are then character offsets).
  const ascii = whole.length === (valueOffsets[data.length] as number) - start;
  for (let i = 0; i < data.length; i++) {
    const from = valueOffsets[i] as number;
    const to = valueOffsets[i + 1] as number;
    into.push(ascii ? whole.slice(from - start, to - start) : decoder.decode(values.subarray(from, to)));
  }
}

export function cubeToArrowIpc(cells: readonly CubeCell[]): Uint8Array {
  const count = cells.length;
  const columns: Record<string, Vector> = {
    segment: stringLists(cells.map((c) => c.segment)),
    action: strings(cells.map((c) => c.action)),
    version: strings(cells.map((c) => c.version)),
  };
  for (const f of CUBE_NUMBER_FIELDS) columns[f] = doubles(Float64Array.from(cells, (c) => c[f]));
  for (const f of NULLABLE_FIELDS) columns[f] = doubles(Float64Array.from(cells, (c) => c[f] ?? 0), cells.map((c) => c[f] !== null));
  if (cells.some((c) => c.target !== null)) {
    const valid = cells.map((c) => c.target !== null);
    for (const f of TARGET_FIELDS) columns[`target_${f}`] = doubles(Float64Array.from(cells, (c) => c.target?.[f] ?? 0), valid);
  }
  const table = new Table(columns);
  if (table.numRows !== count) throw new Error(`cube to Arrow: ${table.numRows} rows for ${count} cells`);
  return tableToIPC(table, 'stream');
}

function column(table: Table, name: string, type: Type): Vector {
  const v = table.getChild(name);
  if (!v) throw new Error(`cube from Arrow: no column "${name}"`);
  if (v.type.typeId !== type) throw new Error(`cube from Arrow: column "${name}" is ${String(v.type)}, not ${Type[type]}`);
  return v;
}

function noNulls(v: Vector, name: string): void {
  if (v.nullCount > 0) throw new Error(`cube from Arrow: column "${name}" has ${v.nullCount} null values`);
}

function allStrings(v: Vector, name: string): string[] {
  noNulls(v, name);
  const out: string[] = [];
  for (const d of v.data as Data<Utf8>[]) readStrings(d, out);
  return out;
}

function allLists(v: Vector, name: string): string[][] {
  noNulls(v, name);
  const out: string[][] = [];
  for (const d of v.data as Data<List<Utf8>>[]) {
    const child = d.children[0] as Data<Utf8>;
    if (child.nullCount > 0) throw new Error(`cube from Arrow: "${name}" holds a null value`);
    const values: string[] = [];
    readStrings(child, values);
    const offsets = d.valueOffsets;
    for (let i = 0; i < d.length; i++) out.push(values.slice(offsets[i] as number, offsets[i + 1] as number));
  }
  return out;
}

/** Values with null where invalid; a Float64 vector's toArray is its buffer (NaN and -0 kept). */
function allDoubles(v: Vector): { values: Float64Array; valid: (i: number) => boolean } {
  const values = v.toArray() as Float64Array;
  return { values, valid: v.nullCount === 0 ? () => true : (i) => v.isValid(i) };
}

/** Reads what cubeToArrowIpc wrote; anything else is refused with the column at fault. */
export function cubeFromArrowIpc(bytes: Uint8Array): CubeCell[] {
  let table: Table;
  try {
    table = tableFromIPC(bytes);
  } catch (error) {
    throw new Error(`cube from Arrow: not an Arrow IPC stream (${error instanceof Error ? error.message : String(error)})`, { cause: error });
  }
  const segment = allLists(column(table, 'segment', Type.List), 'segment');
  const action = allStrings(column(table, 'action', Type.Utf8), 'action');
  const version = allStrings(column(table, 'version', Type.Utf8), 'version');
  const num = (f: NumberField): Float64Array => {
    const v = column(table, f, Type.Float);
    noNulls(v, f);
    return allDoubles(v).values;
  };
  const [bucket, n, nPNull, nPNaN, nPNonPositive, nPAboveOne, nPBelowFloor, nPInvalid, nPOne, nRNull, nP, sumInvP, sumInvP2, nRw, sumInvPRw, sumInvP2Rw, sumR, sumR2, sumRInvP, sumRInvP2, sumR2InvP2, nRAll, sumRAll, sumR2All] = CUBE_NUMBER_FIELDS.map(num) as Float64Array[] as [Float64Array, ...Float64Array[]] & Float64Array[];
  const minP = allDoubles(column(table, 'minP', Type.Float));
  const maxP = allDoubles(column(table, 'maxP', Type.Float));
  const target = table.getChild('target_nInvalid') ? TARGET_FIELDS.map((f) => allDoubles(column(table, `target_${f}`, Type.Float))) : null;
  const at = (values: Float64Array | undefined, i: number): number => (values as Float64Array)[i] as number;
  const cells: CubeCell[] = new Array(table.numRows);
  for (let i = 0; i < table.numRows; i++) {
    let t: TargetColumnSums | null = null;
    if (target && target[0]?.valid(i)) {
      const [a, b, c, d, e, f, g, h] = target.map((x) => x.values[i] as number) as [number, number, number, number, number, number, number, number];
      t = { nInvalid: a, sumW: b, sumW2: c, sumWRw: d, sumW2Rw: e, sumWR: f, sumW2R: g, sumW2R2: h };
    }
    cells[i] = {
      segment: segment[i] as string[], action: action[i] as string, version: version[i] as string, bucket: at(bucket, i),
      n: at(n, i), nPNull: at(nPNull, i), nPNaN: at(nPNaN, i), nPNonPositive: at(nPNonPositive, i), nPAboveOne: at(nPAboveOne, i), nPBelowFloor: at(nPBelowFloor, i),
      nPInvalid: at(nPInvalid, i), nPOne: at(nPOne, i), nRNull: at(nRNull, i), nP: at(nP, i), sumInvP: at(sumInvP, i), sumInvP2: at(sumInvP2, i),
      minP: minP.valid(i) ? at(minP.values, i) : null, maxP: maxP.valid(i) ? at(maxP.values, i) : null,
      nRw: at(nRw, i), sumInvPRw: at(sumInvPRw, i), sumInvP2Rw: at(sumInvP2Rw, i), sumR: at(sumR, i), sumR2: at(sumR2, i), sumRInvP: at(sumRInvP, i),
      sumRInvP2: at(sumRInvP2, i), sumR2InvP2: at(sumR2InvP2, i), nRAll: at(nRAll, i), sumRAll: at(sumRAll, i), sumR2All: at(sumR2All, i), target: t,
    };
  }
  return cells;
}
