/**
 * Values to and from the cell wire form of messages.ts (lossless for bigint, NaN and ±Infinity, which
 * JSON cannot carry), and what both sides derive from a report the same way.
 */
import type { Report } from '../../core/model/report.ts';
import type { Profile } from '../../core/scan/profile.ts';
import { findingWhere } from '../../core/scan/drill.ts';
import type { Cell, Table } from '../../core/table.ts';
import type { WireCell, WireTable } from './messages.ts';

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

/** A JSON-like value (the report model, a profile) in the cell wire form; undefined fields are left out. */
export function encodeValue(value: unknown): WireCell {
  if (Array.isArray(value)) return value.map(encodeValue);
  if (value !== null && typeof value === 'object') {
    const out: { [field: string]: WireCell } = {};
    for (const [k, v] of Object.entries(value)) if (v !== undefined) out[k] = encodeValue(v);
    return { $struct: out };
  }
  return encodeCell(value as Cell);
}

export const encodeReport = (report: Report): WireCell => encodeValue(report);
export const decodeReport = (wire: WireCell): Report => decodeCell(wire) as unknown as Report;
export const encodeProfile = (profile: Profile): WireCell => encodeValue(profile);
export const decodeProfile = (wire: WireCell): Profile => decodeCell(wire) as unknown as Profile;

/**
 * The predicates of a report's findings that select rows of `relation`, in report order. A drill-down
 * request names a finding by its position here; the host looks the predicate up in the report it made
 * itself, so no predicate text is ever taken from a client.
 */
export function findingsWithRows(report: Report, relation: string): string[] {
  const out: string[] = [];
  for (const check of report.checks) {
    for (const finding of check.findings) {
      const where = findingWhere(finding.sql, relation);
      if (where !== null) out.push(where);
    }
  }
  return out;
}
