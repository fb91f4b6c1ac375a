/**
 * The closed set of messages between an engine client and the engine host (child process today; Electron
 * utility process or WebSocket later, carrying the same JSON). Every message is validated on arrival by
 * parseHostMessage. Tables travel in a JSON-safe wire form: bigint as {"$bigint":"123"}, non-finite
 * numbers as {"$num":"NaN" | "Infinity" | "-Infinity"}.
 */
import type { Cell, Table } from '../../core/table.ts';
import type { EngineErrorCode, RegisteredSource, SourceFormat } from '../types.ts';

export const PROTOCOL_VERSION = 1;

/** A path source only: browser File handles never cross a process boundary. */
export interface WirePathSource {
  kind: 'path';
  paths: string[];
  format?: SourceFormat;
  csv?: { delimiter?: string; header?: boolean };
  hivePartitioning?: boolean;
}

export type WireCell = null | boolean | number | string | { $bigint: string } | { $num: 'NaN' | 'Infinity' | '-Infinity' } | WireCell[] | { $struct: { [field: string]: WireCell } };

export interface WireTable {
  names: string[];
  types: string[];
  columns: WireCell[][];
  rowCount: number;
}

export type HostRequest =
  | { kind: 'register'; id: number; source: WirePathSource }
  | { kind: 'query'; id: number; sql: string }
  | { kind: 'cancel'; id: number }
  | { kind: 'close'; id: number }
  | { kind: 'ping'; id: number };

export type HostReply =
  | { kind: 'progress'; id: number; stage: ProgressStage; rowsScanned?: number }
  | { kind: 'registered'; id: number; source: RegisteredSource }
  | { kind: 'result'; id: number; table: WireTable; sourceScans: number }
  | { kind: 'done'; id: number }
  | { kind: 'pong'; id: number; protocol: number }
  | { kind: 'error'; id: number; code: EngineErrorCode; message: string };

export type ProgressStage = 'started' | 'scanning' | 'finished';

export type HostMessage = HostRequest | HostReply;

const ERROR_CODES: readonly EngineErrorCode[] = ['cancelled', 'sql', 'io', 'unsupported-format', 'extension-unavailable', 'out-of-memory', 'closed', 'internal'];
const FORMATS: readonly SourceFormat[] = ['parquet', 'csv', 'ndjson'];
const STAGES: readonly ProgressStage[] = ['started', 'scanning', 'finished'];

export function encodeCell(cell: Cell): WireCell {
  if (typeof cell === 'bigint') return { $bigint: cell.toString() };
  if (typeof cell === 'number') {
    if (Number.isNaN(cell)) return { $num: 'NaN' };
    if (cell === Infinity) return { $num: 'Infinity' };
    if (cell === -Infinity) return { $num: '-Infinity' };
    return cell;
  }
  if (Array.isArray(cell)) return cell.map(encodeCell);
  if (cell !== null && typeof cell === 'object') {
    const out: { [field: string]: WireCell } = {};
    for (const [k, v] of Object.entries(cell)) out[k] = encodeCell(v);
    return { $struct: out };
  }
  return cell;
}

export function decodeCell(wire: WireCell): Cell {
  if (Array.isArray(wire)) return wire.map(decodeCell);
  if (wire !== null && typeof wire === 'object') {
    if ('$bigint' in wire) return BigInt(wire.$bigint);
    if ('$num' in wire) return Number(wire.$num);
    const out: { [field: string]: Cell } = {};
    for (const [k, v] of Object.entries(wire.$struct)) out[k] = decodeCell(v);
    return out;
  }
  return wire;
}

export function encodeTable(table: Table): WireTable {
  return { names: [...table.names], types: [...table.types], columns: table.columns.map((c) => c.map(encodeCell)), rowCount: table.rowCount };
}

export function decodeTable(wire: WireTable): Table {
  return { names: wire.names, types: wire.types, columns: wire.columns.map((c) => c.map(decodeCell)), rowCount: wire.rowCount };
}

export class ProtocolError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ProtocolError';
  }
}

type Obj = Record<string, unknown>;

function isObj(v: unknown): v is Obj {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function fail(what: string): never {
  throw new ProtocolError(`Malformed engine host message: ${what}.`);
}

function str(m: Obj, key: string): string {
  if (typeof m[key] !== 'string') fail(`"${key}" must be a string`);
  return m[key] as string;
}

function int(m: Obj, key: string): number {
  const v = m[key];
  if (typeof v !== 'number' || !Number.isSafeInteger(v) || v < 0) fail(`"${key}" must be a non-negative integer`);
  return v as number;
}

function oneOf<T extends string>(m: Obj, key: string, allowed: readonly T[]): T {
  const v = m[key];
  if (typeof v !== 'string' || !(allowed as readonly string[]).includes(v)) fail(`"${key}" must be one of ${allowed.join(', ')}`);
  return v as T;
}

function stringArray(v: unknown, what: string): string[] {
  if (!Array.isArray(v) || !v.every((x) => typeof x === 'string')) fail(`${what} must be a list of strings`);
  return v as string[];
}

function isWireCell(v: unknown, depth = 0): boolean {
  if (depth > 64) return false;
  if (v === null || typeof v === 'boolean' || typeof v === 'string') return true;
  if (typeof v === 'number') return Number.isFinite(v);
  if (Array.isArray(v)) return v.every((x) => isWireCell(x, depth + 1));
  if (!isObj(v)) return false;
  const keys = Object.keys(v);
  if (keys.length !== 1) return false;
  if ('$bigint' in v) return typeof v.$bigint === 'string' && /^-?\d+$/.test(v.$bigint);
  if ('$num' in v) return v.$num === 'NaN' || v.$num === 'Infinity' || v.$num === '-Infinity';
  if ('$struct' in v) return isObj(v.$struct) && Object.values(v.$struct).every((x) => isWireCell(x, depth + 1));
  return false;
}

function parseTable(v: unknown): WireTable {
  if (!isObj(v)) fail('"table" must be an object');
  const names = stringArray(v.names, '"table.names"');
  const types = stringArray(v.types, '"table.types"');
  const rowCount = int(v, 'rowCount');
  if (types.length !== names.length) fail('"table.types" and "table.names" differ in length');
  if (!Array.isArray(v.columns) || v.columns.length !== names.length) fail('"table.columns" must hold one list per column');
  for (const col of v.columns as unknown[]) {
    if (!Array.isArray(col) || col.length !== rowCount) fail('every column must hold "rowCount" cells');
    if (!col.every((c) => isWireCell(c))) fail('a cell is not in the wire form');
  }
  return { names, types, columns: v.columns as WireCell[][], rowCount };
}

function parseSource(v: unknown): WirePathSource {
  if (!isObj(v) || v.kind !== 'path') fail('"source" must be a path source');
  const source: WirePathSource = { kind: 'path', paths: stringArray(v.paths, '"source.paths"') };
  if (v.format !== undefined) source.format = oneOf(v, 'format', FORMATS);
  if (v.hivePartitioning !== undefined) {
    if (typeof v.hivePartitioning !== 'boolean') fail('"source.hivePartitioning" must be true or false');
    source.hivePartitioning = v.hivePartitioning;
  }
  if (v.csv !== undefined) {
    if (!isObj(v.csv)) fail('"source.csv" must be an object');
    const csv: WirePathSource['csv'] = {};
    if (v.csv.delimiter !== undefined) csv.delimiter = str(v.csv, 'delimiter');
    if (v.csv.header !== undefined) {
      if (typeof v.csv.header !== 'boolean') fail('"source.csv.header" must be true or false');
      csv.header = v.csv.header;
    }
    source.csv = csv;
  }
  return source;
}

function parseRegistered(v: unknown): RegisteredSource {
  if (!isObj(v)) fail('"source" must be an object');
  return { relation: str(v, 'relation'), format: oneOf(v, 'format', FORMATS), files: stringArray(v.files, '"source.files"'), scanSql: str(v, 'scanSql') };
}

/** Validates a message as it arrives; anything outside the protocol is rejected with a ProtocolError. */
export function parseHostMessage(input: unknown): HostMessage {
  if (!isObj(input)) fail('expected an object');
  const id = int(input, 'id');
  switch (input.kind) {
    case 'register': return { kind: 'register', id, source: parseSource(input.source) };
    case 'query': return { kind: 'query', id, sql: str(input, 'sql') };
    case 'cancel': case 'close': case 'ping': case 'done': return { kind: input.kind, id };
    case 'pong': return { kind: 'pong', id, protocol: int(input, 'protocol') };
    case 'progress': {
      const msg: HostReply = { kind: 'progress', id, stage: oneOf(input, 'stage', STAGES) };
      if (input.rowsScanned !== undefined) msg.rowsScanned = int(input, 'rowsScanned');
      return msg;
    }
    case 'registered': return { kind: 'registered', id, source: parseRegistered(input.source) };
    case 'result': return { kind: 'result', id, table: parseTable(input.table), sourceScans: int(input, 'sourceScans') };
    case 'error': return { kind: 'error', id, code: oneOf(input, 'code', ERROR_CODES), message: str(input, 'message') };
    default: return fail(`unknown kind ${JSON.stringify(input.kind)}`);
  }
}

export function isRequest(message: HostMessage): message is HostRequest {
  return message.kind === 'register' || message.kind === 'query' || message.kind === 'cancel' || message.kind === 'close' || message.kind === 'ping';
}
