import type { Report, Signoff } from '../../app/core/model/report.ts';
import { canonicalJson } from '../../app/report/canonical-json.ts';
import { serializeReport } from '../../app/report/serialize.ts';
import { sha256 } from '@noble/hashes/sha2.js';
import { bytesToHex } from '@noble/hashes/utils.js';

/** The same JSON text the headless command writes. */
export function reportJson(report: Report): string {
  return serializeReport(report);
}

/** Digest as app/report/signoff.ts defines it: SHA-256 of the canonical JSON (RFC 8785) without `signoff`. */
export function reportDigest(report: Report): string {
  const { signoff: _signoff, ...rest } = JSON.parse(reportJson(report)) as Record<string, unknown>;
  return bytesToHex(sha256(new TextEncoder().encode(canonicalJson(rest))));
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
