/**
 * The closed set of messages between an engine client and the engine host (child process today; Electron
 * utility process or WebSocket later, carrying the same JSON). Every message is validated on arrival by
 * parseHostMessage. Tables travel in a JSON-safe wire form: bigint as {"$bigint":"123"}, non-finite
 * numbers as {"$num":"NaN" | "Infinity" | "-Infinity"}.
 */
import type { AuditStage } from '../../core/audit.ts';
import { REPORT_SCHEMA_ID } from '../../core/model/contract-ids.ts';
import type { InputFile, Report } from '../../core/model/report.ts';
import { SINGLE_ROLES } from '../../core/roles/roles.ts';
import type { Cell, Table } from '../../core/table.ts';
import type { EngineErrorCode, RegisteredSource, SourceFormat } from '../types.ts';
import { fromBase64 } from './base64.ts';

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

/** app/core's AuditRequest without its callbacks and clock: what a page asks the host to audit. */
export interface WireAuditRequest {
  relation: string;
  input: { files: InputFile[]; format: string };
  scanSql?: string;
  roles?: WireRoleOverrides;
  targets?: { spec: string; tableText?: string }[];
  settings?: Record<string, number | string | boolean>;
  engine: string;
}

export type WireRoleOverrides = { [R in (typeof SINGLE_ROLES)[number]]?: string | null } & { segments?: string[] };

export type HostRequest =
  | { kind: 'register'; id: number; source: WirePathSource }
  | { kind: 'query'; id: number; sql: string }
  | { kind: 'audit'; id: number; request: WireAuditRequest }
  /** Interrupts the running query; with `target`, also stops that audit between its stages. */
  | { kind: 'cancel'; id: number; target?: number }
  | { kind: 'close'; id: number }
  | { kind: 'ping'; id: number };

export type HostReply =
  | { kind: 'progress'; id: number; stage: ProgressStage; rowsScanned?: number }
  | { kind: 'registered'; id: number; source: RegisteredSource }
  | { kind: 'result'; id: number; table: WireTable; sourceScans: number }
  | { kind: 'done'; id: number }
  | { kind: 'pong'; id: number; protocol: number }
  | { kind: 'audit-progress'; id: number; stage: AuditStage; done?: true }
  /** The report in the wire form of cells (lossless: NaN, ±Infinity, bigint) and the cube as base64 Arrow IPC. */
  | { kind: 'audit-result'; id: number; report: WireCell; cube: string }
  | { kind: 'error'; id: number; code: EngineErrorCode; message: string };

export type ProgressStage = 'started' | 'scanning' | 'finished';

export type HostMessage = HostRequest | HostReply;

const ERROR_CODES: readonly EngineErrorCode[] = ['cancelled', 'sql', 'io', 'unsupported-format', 'extension-unavailable', 'out-of-memory', 'closed', 'internal'];
const FORMATS: readonly SourceFormat[] = ['parquet', 'csv', 'ndjson'];
const STAGES: readonly ProgressStage[] = ['started', 'scanning', 'finished'];
const AUDIT_STAGES: readonly AuditStage[] = ['profile', 'cube', 'tails', 'checks'];
const REQUEST_KINDS: readonly HostRequest['kind'][] = ['register', 'query', 'audit', 'cancel', 'close', 'ping'];

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

/** A JSON-like value (the report model) in the wire form of cells; undefined fields are left out. */
export function encodeValue(value: unknown): WireCell {
  if (Array.isArray(value)) return value.map(encodeValue);
  if (value !== null && typeof value === 'object') {
    const out: { [field: string]: WireCell } = {};
    for (const [k, v] of Object.entries(value)) if (v !== undefined) out[k] = encodeValue(v);
    return { $struct: out };
  }
  return encodeCell(value as Cell);
}

export function encodeReport(report: Report): WireCell {
  return encodeValue(report);
}

export function decodeReport(wire: WireCell): Report {
  return decodeCell(wire) as unknown as Report;
}

/** The cube's Arrow IPC bytes from an audit-result message (validated base64 on arrival). */
export function decodeCube(message: { cube: string }): Uint8Array {
  const bytes = fromBase64(message.cube);
  if (!bytes) throw new ProtocolError('Malformed engine host message: "cube" is not base64.');
  return bytes;
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

function optionalString(m: Obj, key: string, what: string): string | undefined {
  if (m[key] === undefined) return undefined;
  if (typeof m[key] !== 'string') fail(`${what} must be a string`);
  return m[key] as string;
}

function onlyKeys(v: Obj, allowed: readonly string[], what: string): void {
  const extra = Object.keys(v).find((k) => !allowed.includes(k) && v[k] !== undefined);
  if (extra !== undefined) fail(`${what} has an unknown field ${JSON.stringify(extra)}`);
}

function parseInputFile(v: unknown, i: number): InputFile {
  const what = `"request.input.files[${i}]"`;
  if (!isObj(v)) fail(`${what} must be an object`);
  onlyKeys(v, ['path', 'bytes', 'sha256', 'modified'], what);
  if (typeof v.path !== 'string') fail(`${what}.path must be a string`);
  if (typeof v.bytes !== 'number' || !Number.isSafeInteger(v.bytes) || v.bytes < 0) fail(`${what}.bytes must be a non-negative integer`);
  if (typeof v.sha256 !== 'string') fail(`${what}.sha256 must be a string`);
  const modified = optionalString(v, 'modified', `${what}.modified`);
  return { path: v.path, bytes: v.bytes, sha256: v.sha256, ...(modified === undefined ? {} : { modified }) };
}

function parseRoles(v: unknown): WireRoleOverrides {
  if (!isObj(v)) fail('"request.roles" must be an object');
  onlyKeys(v, [...SINGLE_ROLES, 'segments'], '"request.roles"');
  const roles: WireRoleOverrides = {};
  for (const role of SINGLE_ROLES) {
    const value = v[role];
    if (value === undefined) continue;
    if (value !== null && typeof value !== 'string') fail(`"request.roles.${role}" must be a column name or null`);
    roles[role] = value;
  }
  if (v.segments !== undefined) roles.segments = stringArray(v.segments, '"request.roles.segments"');
  return roles;
}

function parseTargets(v: unknown): { spec: string; tableText?: string }[] {
  if (!Array.isArray(v)) fail('"request.targets" must be a list');
  return v.map((t: unknown, i) => {
    const what = `"request.targets[${i}]"`;
    if (!isObj(t)) fail(`${what} must be an object`);
    onlyKeys(t, ['spec', 'tableText'], what);
    if (typeof t.spec !== 'string') fail(`${what}.spec must be a string`);
    const tableText = optionalString(t, 'tableText', `${what}.tableText`);
    return tableText === undefined ? { spec: t.spec } : { spec: t.spec, tableText };
  });
}

function parseSettings(v: unknown): Record<string, number | string | boolean> {
  if (!isObj(v)) fail('"request.settings" must be an object');
  const out: Record<string, number | string | boolean> = {};
  for (const [k, x] of Object.entries(v)) {
    if (x === undefined) continue;
    if (typeof x === 'number' ? !Number.isFinite(x) : typeof x !== 'string' && typeof x !== 'boolean') fail(`"request.settings.${k}" must be a finite number, a string or true/false`);
    out[k] = x as number | string | boolean;
  }
  return out;
}

function parseAuditRequest(v: unknown): WireAuditRequest {
  if (!isObj(v)) fail('"request" must be an object');
  onlyKeys(v, ['relation', 'input', 'scanSql', 'roles', 'targets', 'settings', 'engine'], '"request"');
  if (typeof v.relation !== 'string' || v.relation === '') fail('"request.relation" must be a relation name');
  if (!isObj(v.input)) fail('"request.input" must be an object');
  onlyKeys(v.input, ['files', 'format'], '"request.input"');
  if (!Array.isArray(v.input.files)) fail('"request.input.files" must be a list');
  if (typeof v.input.format !== 'string') fail('"request.input.format" must be a string');
  if (typeof v.engine !== 'string') fail('"request.engine" must be a string');
  const request: WireAuditRequest = { relation: v.relation, input: { files: v.input.files.map(parseInputFile), format: v.input.format }, engine: v.engine };
  const scanSql = optionalString(v, 'scanSql', '"request.scanSql"');
  if (scanSql !== undefined) request.scanSql = scanSql;
  if (v.roles !== undefined) request.roles = parseRoles(v.roles);
  if (v.targets !== undefined) request.targets = parseTargets(v.targets);
  if (v.settings !== undefined) request.settings = parseSettings(v.settings);
  return request;
}

function parseWireReport(v: unknown): WireCell {
  if (!isObj(v) || !isObj(v.$struct)) fail('"report" must be a report in the wire form');
  if (v.$struct.schema !== REPORT_SCHEMA_ID) fail(`"report.schema" must be ${JSON.stringify(REPORT_SCHEMA_ID)}`);
  if (!isWireCell(v)) fail('a value of "report" is not in the wire form');
  return v as WireCell;
}

function parseCube(v: unknown): string {
  if (typeof v !== 'string' || v.length === 0 || v.length % 4 !== 0 || !/^[A-Za-z0-9+/]*={0,2}$/.test(v)) fail('"cube" must be Arrow IPC bytes in base64');
  return v as string;
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
    case 'audit': return { kind: 'audit', id, request: parseAuditRequest(input.request) };
    case 'cancel': return input.target === undefined ? { kind: 'cancel', id } : { kind: 'cancel', id, target: int(input, 'target') };
    case 'close': case 'ping': case 'done': return { kind: input.kind, id };
    case 'pong': return { kind: 'pong', id, protocol: int(input, 'protocol') };
    case 'progress': {
      const msg: HostReply = { kind: 'progress', id, stage: oneOf(input, 'stage', STAGES) };
      if (input.rowsScanned !== undefined) msg.rowsScanned = int(input, 'rowsScanned');
      return msg;
    }
    case 'audit-progress': {
      const msg: HostReply = { kind: 'audit-progress', id, stage: oneOf(input, 'stage', AUDIT_STAGES) };
      if (input.done !== undefined) {
        if (input.done !== true) fail('"done" must be true when present');
        msg.done = true;
      }
      return msg;
    }
    case 'audit-result': return { kind: 'audit-result', id, report: parseWireReport(input.report), cube: parseCube(input.cube) };
    case 'registered': return { kind: 'registered', id, source: parseRegistered(input.source) };
    case 'result': return { kind: 'result', id, table: parseTable(input.table), sourceScans: int(input, 'sourceScans') };
    case 'error': return { kind: 'error', id, code: oneOf(input, 'code', ERROR_CODES), message: str(input, 'message') };
    default: return fail(`unknown kind ${JSON.stringify(input.kind)}`);
  }
}

export function isRequest(message: HostMessage): message is HostRequest {
  return (REQUEST_KINDS as readonly string[]).includes(message.kind);
}
