/** Which engine this page talks to, from what the page was given at load. */
export type PageMode =
  | { readonly kind: 'desktop' }
  | { readonly kind: 'hosted'; readonly host: string; readonly token: string }
  | { readonly kind: 'web' };

/** `fragment` is the page URL's hash (`#host=ws://...&token=...`), where the local server puts them. */
export function detectMode(fragment: string, hasDesktopBridge: boolean): PageMode {
  if (hasDesktopBridge) return { kind: 'desktop' };
  const params = new URLSearchParams(fragment.replace(/^#/, ''));
  const host = params.get('host');
  const token = params.get('token');
  if (host && token && /^wss?:\/\//.test(host)) return { kind: 'hosted', host, token };
  return { kind: 'web' };
}

/** What the open screen offers and the header says, per mode. */
export interface ModeTraits {
  readonly description: string;
  /** Logs are named by File handles (picker, drop) or by host paths. */
  readonly opensBy: 'files' | 'paths';
}

export function traitsOf(mode: PageMode): ModeTraits {
  switch (mode.kind) {
    case 'web': return { description: 'Engine: DuckDB-Wasm in this browser tab', opensBy: 'files' };
    case 'hosted': return { description: 'Engine: native DuckDB on this computer (local host)', opensBy: 'paths' };
    case 'desktop': return { description: 'Engine: native DuckDB (desktop)', opensBy: 'paths' };
  }
}
