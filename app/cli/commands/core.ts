/** The audit core, loaded on demand so that sign, verify, keygen, schema and inspect start fast without it. */
import type * as Audit from '../../core/audit.ts';

export type AuditCore = typeof Audit;

export async function loadAuditCore(): Promise<AuditCore> {
  return import('../../core/audit.ts');
}
