/** The closed message set between the UI and the digest worker (STYLE.md §4). */
export interface DigestRequest {
  readonly kind: 'digest';
  readonly id: number;
  readonly file: File;
}

export type DigestReply =
  | { readonly kind: 'digest'; readonly id: number; readonly sha256: string }
  | { readonly kind: 'error'; readonly id: number; readonly message: string };

export function isDigestReply(value: unknown): value is DigestReply {
  if (typeof value !== 'object' || value === null) return false;
  const v = value as Record<string, unknown>;
  return typeof v.id === 'number' && ((v.kind === 'digest' && typeof v.sha256 === 'string') || (v.kind === 'error' && typeof v.message === 'string'));
}
