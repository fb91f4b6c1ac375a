import type { Report } from '../../app/core/model/report.ts';
import { parseReport } from '../../app/report/validate.ts';

/**
 * The audit on screen, kept in this browser's IndexedDB so that a reload shows it again (the recent list in
 * localStorage keeps only small reports; IndexedDB holds a report of any size). One record, replaced by each
 * finished audit or sign-off and removed when another log is opened.
 */
export interface CurrentAudit {
  readonly label: string;
  readonly report: Report;
}

const DB = 'counterweight';
const STORE = 'current-audit';
const KEY = 'current';

function openDb(): Promise<IDBDatabase> {
  return new Promise((resolve, reject) => {
    const request = indexedDB.open(DB, 1);
    request.onupgradeneeded = () => { request.result.createObjectStore(STORE); };
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => reject(request.error ?? new Error('IndexedDB could not be opened'));
  });
}

async function withStore<T>(mode: IDBTransactionMode, act: (store: IDBObjectStore) => IDBRequest<T>): Promise<T> {
  const db = await openDb();
  try {
    return await new Promise<T>((resolve, reject) => {
      const tx = db.transaction(STORE, mode);
      const request = act(tx.objectStore(STORE));
      tx.oncomplete = () => resolve(request.result);
      tx.onerror = () => reject(tx.error ?? new Error('IndexedDB transaction failed'));
      tx.onabort = () => reject(tx.error ?? new Error('IndexedDB transaction aborted'));
    });
  } finally {
    db.close();
  }
}

/** Keeps the audit on screen; a browser without IndexedDB (or out of quota) simply does not restore it. */
export async function saveCurrentAudit(current: CurrentAudit): Promise<void> {
  if (typeof indexedDB === 'undefined') return;
  // JSON text, not a structured clone: the same bytes a report file holds, validated again on the way back
  await withStore('readwrite', (s) => s.put({ label: current.label, report: JSON.stringify(current.report) }, KEY)).catch(() => undefined);
}

/** The kept audit, or null when there is none or it no longer meets the report contract (an older build wrote it). */
export async function loadCurrentAudit(): Promise<CurrentAudit | null> {
  if (typeof indexedDB === 'undefined') return null;
  try {
    const stored: unknown = await withStore('readonly', (s) => s.get(KEY) as IDBRequest<unknown>);
    return currentAuditOf(stored);
  } catch {
    return null;
  }
}

export async function forgetCurrentAudit(): Promise<void> {
  if (typeof indexedDB === 'undefined') return;
  await withStore('readwrite', (s) => s.delete(KEY)).catch(() => undefined);
}

/** Reads a stored record back: a label and a report text that parses and validates, or null. */
export function currentAuditOf(stored: unknown): CurrentAudit | null {
  if (typeof stored !== 'object' || stored === null) return null;
  const { label, report } = stored as Record<string, unknown>;
  if (typeof label !== 'string' || typeof report !== 'string') return null;
  try {
    return { label, report: parseReport(JSON.parse(report), 'the kept audit') };
  } catch {
    return null;
  }
}
