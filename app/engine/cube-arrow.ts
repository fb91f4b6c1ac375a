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
import { blankCell, blankTargetSums, MAX_FIELDS, MIN_FIELDS, SUM_FIELDS, TARGET_FIELDS } from '../core/cube/measures.ts';
import type { CubeCell } from '../core/cube/types.ts';

/** Count and sum fields of a cell, in column order; every one is a number (from the measures table). */
export const CUBE_NUMBER_FIELDS: readonly (keyof CubeCell)[] = ['bucket', ...SUM_FIELDS];
/** Minima and maxima: null when the cell has no valid propensity. */
const NULLABLE_FIELDS = [...MIN_FIELDS, ...MAX_FIELDS];

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
  for (const f of CUBE_NUMBER_FIELDS) columns[f] = doubles(Float64Array.from(cells, (c) => c[f] as number));
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
  const num = (f: string): Float64Array => {
    const v = column(table, f, Type.Float);
    noNulls(v, f);
    return allDoubles(v).values;
  };
  // every column is found by its name; a missing or mistyped one is refused above
  const numbers = CUBE_NUMBER_FIELDS.map((f) => [f, num(f)] as const);
  const extrema = NULLABLE_FIELDS.map((f) => [f, allDoubles(column(table, f, Type.Float))] as const);
  const target = table.getChild(`target_${TARGET_FIELDS[0]}`) ? TARGET_FIELDS.map((f) => [f, allDoubles(column(table, `target_${f}`, Type.Float))] as const) : null;
  const cells: CubeCell[] = new Array(table.numRows);
  for (let i = 0; i < table.numRows; i++) {
    const cell = blankCell();
    cell.segment = segment[i] as string[];
    cell.action = action[i] as string;
    cell.version = version[i] as string;
    for (const [f, values] of numbers) cell[f] = values[i] as number;
    for (const [f, x] of extrema) cell[f] = x.valid(i) ? (x.values[i] as number) : null;
    let t: Record<string, number> | null = null;
    if (target && target[0]?.[1].valid(i)) {
      t = blankTargetSums();
      for (const [f, x] of target) t[f] = x.values[i] as number;
    }
    cell.target = t;
    cells[i] = cell as unknown as CubeCell;
  }
  return cells;
}
