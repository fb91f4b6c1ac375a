import { readFileSync } from 'node:fs';
import { runAudit, type AuditRequest } from '../../app/core/audit.ts';
import type { Report } from '../../app/core/model/report.ts';
import type { Engine } from '../../app/engine/types.ts';

export const SAMPLE = new URL('../../sample-data/', import.meta.url).pathname;
export const V9 = `${SAMPLE}maple-row-v9-policy.csv`;
export const v9Target = () => ({ spec: `table:${V9}`, tableText: readFileSync(V9, 'utf8') });

/** Fixed clock so two audits of the same log are comparable (only report.run may differ). */
export const FIXED_NOW = () => Date.parse('2026-06-01T00:00:00Z');

export async function auditFile(engine: Engine, path: string, request: Partial<AuditRequest> = {}): Promise<Report> {
  const src = await engine.register({ kind: 'path', paths: [path] });
  return runAudit((sql) => engine.query(sql), { relation: src.relation, input: { files: [], format: src.format }, engine: engine.kind, now: FIXED_NOW, ...request });
}

/** Deep comparison of two JSON-like values with relative tolerance on numbers; returns the first difference. */
export function firstDifference(a: unknown, b: unknown, tol: number, path = ''): string | null {
  if (typeof a === 'number' && typeof b === 'number') {
    if (a === b) return null;
    const scale = Math.max(Math.abs(a), Math.abs(b));
    return Math.abs(a - b) <= tol * scale ? null : `${path}: ${a} vs ${b}`;
  }
  if (typeof a === 'string' && typeof b === 'string') {
    if (a === b) return null;
    // numbers printed inside messages may differ in the last printed digit only when values differ by ~1e-15
    return a.replace(/-?\d+(\.\d+)?(e[-+]?\d+)?/g, '#') === b.replace(/-?\d+(\.\d+)?(e[-+]?\d+)?/g, '#') ? null : `${path}: "${a}" vs "${b}"`;
  }
  if (Array.isArray(a) && Array.isArray(b)) {
    if (a.length !== b.length) return `${path}: length ${a.length} vs ${b.length}`;
    for (let i = 0; i < a.length; i++) {
      const d = firstDifference(a[i], b[i], tol, `${path}[${i}]`);
      if (d) return d;
    }
    return null;
  }
  if (a && b && typeof a === 'object' && typeof b === 'object') {
    const ka = Object.keys(a).sort();
    const kb = Object.keys(b).sort();
    if (ka.join() !== kb.join()) return `${path}: keys ${ka.join(',')} vs ${kb.join(',')}`;
    for (const k of ka) {
      const d = firstDifference((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], tol, `${path}.${k}`);
      if (d) return d;
    }
    return null;
  }
  return a === b ? null : `${path}: ${String(a)} vs ${String(b)}`;
}
