import type { Report, Signoff } from '../../app/core/model/report.ts';
import { canonicalJson } from '../../app/report/canonical-json.ts';
import { Sha256 } from '../engine/sha256.ts';

const KEY_ORDER = ['schema', 'tool', 'input', 'roles', 'settings', 'verdict', 'reasons', 'checks', 'targets', 'segments', 'queries', 'cautions', 'run', 'signoff'];

/**
 * The same JSON text as app/report/json.ts serializeReport (which reads the schema through node:fs and
 * cannot load in a page): non-finite numbers become null, bigints numbers when safe, else strings.
 */
function replacer(_key: string, value: unknown): unknown {
  if (typeof value === 'number' && !Number.isFinite(value)) return null;
  if (typeof value === 'bigint') {
    return value >= BigInt(Number.MIN_SAFE_INTEGER) && value <= BigInt(Number.MAX_SAFE_INTEGER) ? Number(value) : value.toString();
  }
  return value;
}

export function reportJson(report: Report): string {
  const source = report as unknown as Record<string, unknown>;
  const ordered: Record<string, unknown> = {};
  for (const key of KEY_ORDER) if (key in source) ordered[key] = source[key];
  for (const key of Object.keys(source)) if (!(key in ordered)) ordered[key] = source[key];
  return `${JSON.stringify(ordered, replacer, 2)}\n`;
}

/** Digest as app/report/signoff.ts defines it: SHA-256 of the canonical JSON (RFC 8785) without `signoff`. */
export function reportDigest(report: Report): string {
  const { signoff: _signoff, ...rest } = JSON.parse(reportJson(report)) as Record<string, unknown>;
  return new Sha256().update(new TextEncoder().encode(canonicalJson(rest))).hex();
}

export function signReport(report: Report, block: Pick<Signoff, 'reviewer' | 'decision' | 'note'>, now: Date = new Date()): Report {
  const signoff: Signoff = { reviewer: block.reviewer, decision: block.decision, note: block.note, signed_at: now.toISOString(), digest: reportDigest(report) };
  return { ...report, signoff };
}

export function downloadText(text: string, fileName: string, type = 'application/json'): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = fileName;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}
