/**
 * Loads a log that native DuckDB reads into tables on local ClickHouse servers (test/engine/clickhouse-servers.ts),
 * split over them row by row, as RowBinary (18.16 parses numbers in text input up to one unit in the last
 * place off; bytes go in exactly). Every column is Nullable, as DuckDB's are.
 */
import type { Table } from '../../app/core/table.ts';
import type { LocalShards } from './clickhouse-servers.ts';

const TYPES: Readonly<Record<string, string>> = {
  VARCHAR: 'String', DOUBLE: 'Float64', INTEGER: 'Int32', BIGINT: 'Int64', TIMESTAMP: 'DateTime', BOOLEAN: 'UInt8', DATE: 'Date',
};

export function clickhouseType(duckdbType: string): string {
  const t = TYPES[duckdbType];
  if (!t) throw new Error(`no ClickHouse column type for DuckDB's ${duckdbType} in the test loader`);
  return `Nullable(${t})`;
}

function varint(n: number): number[] {
  const out: number[] = [];
  do {
    let b = n & 0x7f;
    n >>>= 7;
    if (n) b |= 0x80;
    out.push(b);
  } while (n);
  return out;
}

/** One row's values as RowBinary bytes (Nullable: a 0/1 byte, then the value). */
function encode(types: readonly string[], values: readonly unknown[]): Buffer {
  const parts: Buffer[] = [];
  types.forEach((type, j) => {
    const v = values[j];
    if (v === null || v === undefined) { parts.push(Buffer.from([1])); return; }
    parts.push(Buffer.from([0]));
    switch (type) {
      case 'VARCHAR': {
        const bytes = Buffer.from(String(v), 'utf8');
        parts.push(Buffer.from(varint(bytes.length)), bytes);
        break;
      }
      case 'DOUBLE': { const b = Buffer.alloc(8); b.writeDoubleLE(Number(v)); parts.push(b); break; }
      case 'INTEGER': { const b = Buffer.alloc(4); b.writeInt32LE(Number(v)); parts.push(b); break; }
      case 'BIGINT': { const b = Buffer.alloc(8); b.writeBigInt64LE(BigInt(v as bigint)); parts.push(b); break; }
      case 'BOOLEAN': parts.push(Buffer.from([v ? 1 : 0])); break;
      case 'DATE': { const b = Buffer.alloc(2); b.writeUInt16LE(Date.parse(`${String(v)}T00:00:00Z`) / 86_400_000); parts.push(b); break; }
      case 'TIMESTAMP': {
        const ms = Date.parse(String(v));
        if (ms % 1000 !== 0) throw new Error(`DateTime holds whole seconds; ${String(v)} has a fraction`);
        const b = Buffer.alloc(4);
        b.writeUInt32LE(ms / 1000);
        parts.push(b);
        break;
      }
      default: throw new Error(`cannot encode ${type}`);
    }
  });
  return Buffer.concat(parts);
}

/**
 * Creates `table` on every server (MergeTree, no sorting key: rows keep their insert order) and inserts the
 * rows of `log`, row i going to the server `shardOf(i, row)` names.
 */
export async function loadShards(shards: LocalShards, table: string, log: Table, shardOf: (i: number, row: readonly unknown[]) => number): Promise<number[]> {
  const columns = log.names.map((n, j) => `\`${n}\` ${clickhouseType(log.types[j] as string)}`);
  const buffers: Buffer[][] = shards.servers.map(() => []);
  for (let i = 0; i < log.rowCount; i++) {
    const row = log.columns.map((c) => c[i]);
    const s = shardOf(i, row);
    buffers[s]!.push(encode(log.types, row));
  }
  for (let s = 0; s < shards.servers.length; s++) {
    await shards.admin(s, `CREATE TABLE ${table} (${columns.join(', ')}) ENGINE = MergeTree() ORDER BY tuple()`);
    if (buffers[s]!.length) await shards.admin(s, `INSERT INTO ${table} FORMAT RowBinary`, Buffer.concat(buffers[s]!));
  }
  return buffers.map((b) => b.length);
}
