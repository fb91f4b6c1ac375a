/**
 * The closed set of messages between an engine client (the desktop renderer, a hosted page, a test) and
 * the engine host, each declared once as a zod schema; the TypeScript types are inferred from them and
 * the parsers (requests.ts, replies.ts) are these schemas. No request carries SQL: each names what to do
 * (register, profile, audit, drill-page, drill-count, cancel, close, ping) with typed parameters, and
 * the host builds the statements from app/core's builders. Values that JSON cannot carry (bigint, NaN,
 * ±Infinity) travel in the cell wire form of codec.ts; the cube travels as bytes (Uint8Array), which
 * every carrier moves as binary (structured clone, or a binary WebSocket frame: frames.ts).
 */
import { z } from 'zod';
import { SINGLE_ROLES, type SingleRole } from '../../core/roles/roles.ts';
import { REPORT_SCHEMA_ID } from '../../core/model/contract-ids.ts';
import { ENGINE_ERROR_CODES } from '../types.ts';

/** Bumped whenever a message changes shape; a client checks it on connect (the ping reply). */
export const PROTOCOL_VERSION = 2;

/** A drill-down page holds at most this many rows (the page shows 200 at a time). */
export const MAX_PAGE_ROWS = 1000;
/** Byte cap of one reply (its JSON text, plus the cube's bytes). */
export const MAX_REPLY_BYTES = 128 * 1024 * 1024;
/** Paths in one registration, and the longest path. */
export const MAX_PATHS = 1000;
export const MAX_PATH_CHARS = 4096;
/** A target table is a few rows per (segment, action); the desktop picker refuses files above 5 MB too. */
export const MAX_TABLE_TEXT_CHARS = 5 * 1024 * 1024;
const MAX_NAME_CHARS = 1024;
const MAX_NESTING = 64;

const id = z.number().int().nonnegative().max(Number.MAX_SAFE_INTEGER);
/** A registered source as the host named it ("src_1"); only those names are accepted back. */
const relation = z.string().regex(/^"src_\d{1,9}"$/, 'must be a source the engine registered, such as "src_1"');
const columnName = z.string().min(1).max(MAX_NAME_CHARS);
const path = z.string().min(1).max(MAX_PATH_CHARS).refine((p) => !p.includes('\0'), 'must not contain a NUL character');

export const SOURCE_FORMATS = ['parquet', 'csv', 'ndjson'] as const;
export const AUDIT_STAGES = ['profile', 'cube', 'tails', 'checks'] as const;

/** The cell wire form: bigint as {"$bigint":"123"}, non-finite numbers as {"$num":"NaN"}, objects as {"$struct":{...}}. */
export type WireCell = null | boolean | number | string | { $bigint: string } | { $num: 'NaN' | 'Infinity' | '-Infinity' } | WireCell[] | { $struct: { [field: string]: WireCell } };

function isWireCell(v: unknown, depth: number): boolean {
  if (depth > MAX_NESTING) return false;
  if (v === null || typeof v === 'boolean' || typeof v === 'string') return true;
  if (typeof v === 'number') return Number.isFinite(v);
  if (Array.isArray(v)) return v.every((x) => isWireCell(x, depth + 1));
  if (typeof v !== 'object') return false;
  const keys = Object.keys(v);
  if (keys.length !== 1) return false;
  const o = v as Record<string, unknown>;
  if ('$bigint' in o) return typeof o.$bigint === 'string' && /^-?\d{1,80}$/.test(o.$bigint);
  if ('$num' in o) return o.$num === 'NaN' || o.$num === 'Infinity' || o.$num === '-Infinity';
  if ('$struct' in o) {
    const s = o.$struct;
    return typeof s === 'object' && s !== null && !Array.isArray(s) && Object.values(s).every((x) => isWireCell(x, depth + 1));
  }
  return false;
}

/** A recursive check written as one predicate: a deep report is validated without a schema object per node. */
export const wireCell = z.custom<WireCell>((v) => isWireCell(v, 0), 'is not a value in the cell wire form');

export const wireTable = z.strictObject({
  names: z.array(z.string()),
  types: z.array(z.string()),
  columns: z.array(z.array(wireCell)),
  rowCount: z.number().int().nonnegative(),
}).refine((t) => t.types.length === t.names.length && t.columns.length === t.names.length && t.columns.every((c) => c.length === t.rowCount),
  'a table needs one type and one list of "rowCount" cells per column');
export type WireTable = z.infer<typeof wireTable>;

export const pathSource = z.strictObject({
  kind: z.literal('path'),
  paths: z.array(path).min(1).max(MAX_PATHS),
  format: z.enum(SOURCE_FORMATS).optional(),
  csv: z.strictObject({ delimiter: z.string().min(1).max(4).optional(), header: z.boolean().optional() }).optional(),
  hivePartitioning: z.boolean().optional(),
});
export type WirePathSource = z.infer<typeof pathSource>;

const roleShape = Object.fromEntries(SINGLE_ROLES.map((r) => [r, columnName.nullable().optional()])) as { [R in SingleRole]: z.ZodOptional<z.ZodNullable<typeof columnName>> };
export const roleOverrides = z.strictObject({ ...roleShape, segments: z.array(columnName).max(64).optional() });
export type WireRoleOverrides = z.infer<typeof roleOverrides>;

/** What a page asks the host to audit: a registered source and the user's choices, nothing the host could run. */
export const auditRequest = z.strictObject({
  source: relation,
  roles: roleOverrides.optional(),
  targets: z.array(z.strictObject({ spec: z.string().min(1).max(MAX_PATH_CHARS), tableText: z.string().max(MAX_TABLE_TEXT_CHARS).optional() })).max(64).optional(),
  settings: z.record(z.string().max(128), z.union([z.number().finite(), z.string().max(1024), z.boolean()])).optional(),
});
export type WireAuditRequest = z.infer<typeof auditRequest>;

export const drillRoles = z.strictObject({ time: columnName.nullable(), decision_id: columnName.nullable(), action: columnName.nullable() });

/**
 * Which rows: a segment-map cell (segment values, an action, a capped column's kept values) or a finding
 * of the host's latest audit of that source, by its position among that report's findings with rows
 * (codec.ts findingsWithRows); its predicate never leaves the host.
 */
export const drillSelection = z.strictObject({
  segment: z.record(columnName, z.string().max(MAX_NAME_CHARS)),
  action: z.string().max(MAX_NAME_CHARS).nullable().optional(),
  kept: z.record(columnName, z.array(z.string().max(MAX_NAME_CHARS)).max(100_000)).optional(),
  finding: z.number().int().nonnegative().optional(),
});
export type WireDrillSelection = z.infer<typeof drillSelection>;

export const drillCursor = z.strictObject({ key: z.array(wireCell).max(8), types: z.array(z.string().max(64)).max(8), tied: z.number().int().nonnegative() });

export const pageRequest = z.strictObject({
  offset: z.number().int().nonnegative().max(Number.MAX_SAFE_INTEGER),
  limit: z.number().int().min(1).max(MAX_PAGE_ROWS),
  after: drillCursor.nullable().optional(),
});

export const hostRequest = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('ping'), id }),
  z.strictObject({ kind: z.literal('register'), id, source: pathSource }),
  z.strictObject({ kind: z.literal('profile'), id, source: relation }),
  z.strictObject({ kind: z.literal('audit'), id, request: auditRequest }),
  z.strictObject({ kind: z.literal('drill-page'), id, source: relation, roles: drillRoles, selection: drillSelection, page: pageRequest }),
  z.strictObject({ kind: z.literal('drill-count'), id, source: relation, roles: drillRoles, selection: drillSelection }),
  /** Interrupts the running query; with `target`, also stops that audit between its stages. */
  z.strictObject({ kind: z.literal('cancel'), id, target: id.optional() }),
  z.strictObject({ kind: z.literal('close'), id }),
]);
export type HostRequest = z.infer<typeof hostRequest>;

const inputFile = z.strictObject({ path: z.string(), bytes: z.number().int().nonnegative(), sha256: z.string().regex(/^[0-9a-f]{64}$/), modified: z.string().optional() });

const wireReport = wireCell.refine((v) => typeof v === 'object' && v !== null && '$struct' in v && v.$struct.schema === REPORT_SCHEMA_ID, `must be a report with schema ${JSON.stringify(REPORT_SCHEMA_ID)}`);

export const hostReply = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('pong'), id, protocol: z.number().int().nonnegative() }),
  z.strictObject({
    kind: z.literal('registered'),
    id,
    source: z.strictObject({ relation, format: z.enum(SOURCE_FORMATS), files: z.array(z.string()), scanSql: z.string() }),
    /** Size, time and SHA-256 of each file, computed by the host while it reads them (fingerprint.ts). */
    inputs: z.array(inputFile),
  }),
  z.strictObject({ kind: z.literal('profiled'), id, profile: wireCell, evidence: wireCell.optional() }),
  /** A stage starts or ends, or (every quarter second while it runs) where the audit is: app/core/progress.ts's ProgressPoint. */
  z.strictObject({
    kind: z.literal('audit-progress'),
    id,
    stage: z.enum(AUDIT_STAGES),
    done: z.literal(true).optional(),
    point: z.strictObject({
      stage: z.enum(AUDIT_STAGES),
      stageIndex: z.number().int().positive(),
      stageCount: z.number().int().positive(),
      logShare: z.number().min(0).max(1).nullable(),
      share: z.number().min(0).max(1),
      secondsLeft: z.number().nonnegative().nullable(),
      elapsedSeconds: z.number().nonnegative(),
    }).optional(),
  }),
  /** The report in the cell wire form (lossless) and the cube as Arrow IPC bytes (app/engine/cube-arrow.ts). */
  z.strictObject({ kind: z.literal('audit-result'), id, report: wireReport, cube: z.custom<Uint8Array>((v) => v instanceof Uint8Array, 'must be the bytes of the cube') }),
  z.strictObject({ kind: z.literal('rows'), id, table: wireTable }),
  z.strictObject({ kind: z.literal('count'), id, rows: z.number().nonnegative() }),
  z.strictObject({ kind: z.literal('done'), id }),
  z.strictObject({ kind: z.literal('error'), id, code: z.enum(ENGINE_ERROR_CODES), message: z.string() }),
]);
export type HostReply = z.infer<typeof hostReply>;

export type HostMessage = HostRequest | HostReply;

export const REQUEST_KINDS = hostRequest.options.map((o) => o.shape.kind.value);
export const REPLY_KINDS = hostReply.options.map((o) => o.shape.kind.value);
