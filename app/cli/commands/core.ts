/** The audit core, loaded on demand so that sign, verify, keygen, schema and inspect start fast without it. */
export type AuditCore = typeof import('../../core/audit.ts');

export async function loadAuditCore(): Promise<AuditCore> {
  return import('../../core/audit.ts');
}
