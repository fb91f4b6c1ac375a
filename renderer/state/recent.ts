import type { Report, Verdict } from '../../app/core/model/report.ts';
import { validateReport } from '../../app/report/validate.ts';

/** A finished audit remembered in this browser (localStorage), newest first. */
export interface RecentAudit {
  readonly id: string;
  readonly label: string;
  readonly at: string;
  readonly rows: number;
  readonly verdict: Verdict;
  /** Kept only when small enough; the list stays useful without it. */
  readonly report?: Report;
}

const KEY = 'counterweight.recent-audits';
const MAX_ENTRIES = 8;
const MAX_REPORT_CHARS = 400_000;

export function loadRecent(storage: Storage = localStorage): RecentAudit[] {
  try {
    const parsed: unknown = JSON.parse(storage.getItem(KEY) ?? '[]');
    // A stored report that no longer meets the contract (an older build wrote it) is dropped, the entry kept.
    return Array.isArray(parsed) ? parsed.filter(isRecent).map((r) => (r.report && !validateReport(r.report).ok ? { ...r, report: undefined } : r)) : [];
  } catch {
    return [];
  }
}

export function rememberAudit(label: string, report: Report, storage: Storage = localStorage): RecentAudit[] {
  const json = JSON.stringify(report);
  const entry: RecentAudit = {
    id: `${report.run.started_at}|${label}`,
    label,
    at: report.run.started_at,
    rows: report.input.rows,
    verdict: report.verdict,
    ...(json.length <= MAX_REPORT_CHARS ? { report } : {}),
  };
  const list = [entry, ...loadRecent(storage).filter((r) => r.id !== entry.id)].slice(0, MAX_ENTRIES);
  for (let keep = list.length; keep > 0; keep--) {
    try {
      // Older entries lose their stored report first when the browser's quota is reached.
      const trimmed = list.map((r, i) => (i < keep || !r.report ? r : { ...r, report: undefined }));
      storage.setItem(KEY, JSON.stringify(trimmed));
      return trimmed;
    } catch {
      continue;
    }
  }
  return list;
}

export function forgetRecent(storage: Storage = localStorage): void {
  storage.removeItem(KEY);
}

function isRecent(value: unknown): value is RecentAudit {
  if (typeof value !== 'object' || value === null) return false;
  const v = value as Record<string, unknown>;
  return typeof v.id === 'string' && typeof v.label === 'string' && typeof v.at === 'string' && typeof v.verdict === 'string';
}
