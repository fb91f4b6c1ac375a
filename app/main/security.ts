import type { Session, WebContents } from 'electron';

export interface CspOptions {
  /** Extra connect-src sources, e.g. the hosted engine socket `ws://127.0.0.1:5178` in web mode. */
  connect?: readonly string[];
}

/**
 * The Content-Security-Policy for the renderer, in the desktop app and in web mode alike.
 * The desktop renderer reaches the engine host over IPC, so it gets no socket source at all.
 */
export function contentSecurityPolicy(options: CspOptions = {}): string {
  const directives: [string, ...string[]][] = [
    ['default-src', "'self'"],
    // 'wasm-unsafe-eval' lets DuckDB-Wasm compile its WebAssembly module; it allows no JavaScript eval.
    ['script-src', "'self'", "'wasm-unsafe-eval'"],
    // DuckDB-Wasm's worker may be started through a blob: wrapper that imports the same-origin script.
    ['worker-src', "'self'", 'blob:'],
    ['connect-src', "'self'", ...(options.connect ?? [])],
    // ECharts exports a chart as a data: or blob: image.
    ['img-src', "'self'", 'data:', 'blob:'],
    // React's style props and ECharts go through the CSSOM, which style-src does not restrict.
    ['style-src', "'self'"],
    ['font-src', "'self'"],
    ['object-src', "'none'"],
    ['frame-src', "'none'"],
    ['frame-ancestors', "'none'"],
    ['base-uri', "'none'"],
    ['form-action', "'none'"],
  ];
  return directives.map((parts) => parts.join(' ')).join('; ');
}

export type HeaderMap = Record<string, string[] | string>;

/** Replaces any Content-Security-Policy the response carried (in any letter case) with ours. */
export function withCspHeader(headers: HeaderMap | undefined, policy: string): Record<string, string[]> {
  const out: Record<string, string[]> = {};
  for (const [name, value] of Object.entries(headers ?? {})) {
    if (name.toLowerCase() === 'content-security-policy') continue;
    out[name] = Array.isArray(value) ? value : [value];
  }
  out['Content-Security-Policy'] = [policy];
  return out;
}

/**
 * `scheme://host[:port]` of a URL, or null when it does not parse. URL.origin is "null" for
 * non-special schemes such as the app's own, so the origin is assembled from its parts.
 */
export function originOf(url: string): string | null {
  let parsed: URL;
  try {
    parsed = new URL(url);
  } catch {
    return null;
  }
  if (parsed.host === '') return null;
  return `${parsed.protocol}//${parsed.host}`;
}

/** Only the app's own pages may load in the window; everything else is refused. */
export function isAllowedNavigation(url: string, appOrigin: string): boolean {
  const origin = originOf(url);
  return origin !== null && origin === appOrigin;
}

/** The app opens no second window; links to other sites are refused rather than opened. */
export function windowOpenDecision(): { action: 'deny' } {
  return { action: 'deny' };
}

/** The app needs no browser permission (camera, notifications, geolocation, ...), so all are refused. */
export function permissionDecision(_permission: string): boolean {
  return false;
}

export function applyCsp(session: Session, policy: string): void {
  session.webRequest.onHeadersReceived((details, callback) => {
    callback({ responseHeaders: withCspHeader(details.responseHeaders, policy) });
  });
}

export function denyPermissions(session: Session): void {
  session.setPermissionRequestHandler((_contents, permission, callback) => callback(permissionDecision(permission)));
  session.setPermissionCheckHandler((_contents, permission) => permissionDecision(permission));
}

/** Blocks navigation and redirects away from the app, new windows, and <webview> tags. */
export function guardWebContents(contents: WebContents, appOrigin: string): void {
  const refuseForeign = (event: { preventDefault(): void }, url: string): void => {
    if (!isAllowedNavigation(url, appOrigin)) event.preventDefault();
  };
  contents.on('will-navigate', (event) => refuseForeign(event, event.url));
  contents.on('will-redirect', (event) => refuseForeign(event, event.url));
  contents.on('will-attach-webview', (event) => event.preventDefault());
  contents.setWindowOpenHandler(() => windowOpenDecision());
}
