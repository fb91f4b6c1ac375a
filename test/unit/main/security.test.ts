import { describe, expect, it } from 'vitest';
import {
  contentSecurityPolicy,
  guardWebContents,
  isAllowedNavigation,
  originOf,
  permissionDecision,
  windowOpenDecision,
  withCspHeader,
} from '../../../app/main/security.ts';
import { APP_ORIGIN } from '../../../app/main/app-protocol.ts';

function directives(policy: string): Map<string, string[]> {
  const map = new Map<string, string[]>();
  for (const part of policy.split(';')) {
    const [name, ...sources] = part.trim().split(/\s+/);
    if (name) map.set(name, sources);
  }
  return map;
}

describe('contentSecurityPolicy', () => {
  const csp = directives(contentSecurityPolicy());

  it('allows scripts only from the app itself, plus WebAssembly compilation', () => {
    expect(csp.get('script-src')).toEqual(["'self'", "'wasm-unsafe-eval'"]);
  });

  it('never allows inline or eval-ed script or style anywhere in the policy', () => {
    const policy = contentSecurityPolicy({ connect: ['ws://127.0.0.1:5178'] });
    expect(directives(policy).get('style-src')).toEqual(["'self'"]);
    for (const [name, sources] of directives(policy)) {
      expect(sources, name).not.toContain("'unsafe-inline'");
      expect(sources, name).not.toContain("'unsafe-eval'");
    }
  });

  it('shuts off plugins, framing, <base> and form posts', () => {
    expect(csp.get('object-src')).toEqual(["'none'"]);
    expect(csp.get('frame-ancestors')).toEqual(["'none'"]);
    expect(csp.get('base-uri')).toEqual(["'none'"]);
    expect(csp.get('form-action')).toEqual(["'none'"]);
    expect(csp.get('default-src')).toEqual(["'self'"]);
  });

  it('lets the DuckDB-Wasm worker start from the app or a blob: wrapper only', () => {
    expect(csp.get('worker-src')).toEqual(["'self'", 'blob:']);
  });

  it('opens no network connection in the desktop app; web mode adds exactly the engine socket', () => {
    expect(csp.get('connect-src')).toEqual(["'self'"]);
    const web = directives(contentSecurityPolicy({ connect: ['ws://127.0.0.1:5178'] }));
    expect(web.get('connect-src')).toEqual(["'self'", 'ws://127.0.0.1:5178']);
  });
});

describe('withCspHeader', () => {
  it('replaces a CSP sent in any letter case and keeps the other headers', () => {
    const out = withCspHeader({ 'content-security-policy': ['default-src *'], 'Content-Type': 'text/html' }, "default-src 'self'");
    expect(out).toEqual({ 'Content-Type': ['text/html'], 'Content-Security-Policy': ["default-src 'self'"] });
  });

  it('adds the CSP when the response had no headers', () => {
    expect(withCspHeader(undefined, 'x')).toEqual({ 'Content-Security-Policy': ['x'] });
  });
});

describe('navigation guards', () => {
  it.each([
    [`${APP_ORIGIN}/index.html`, true],
    [`${APP_ORIGIN}/report#print`, true],
    ['https://example.org/', false],
    ['counterweight://other/index.html', false],
    ['file:///etc/passwd', false],
    ['javascript:alert(1)', false],
    ['data:text/html,<script>1</script>', false],
    ['not a url', false],
  ])('isAllowedNavigation(%s) is %s', (url, allowed) => {
    expect(isAllowedNavigation(url, APP_ORIGIN)).toBe(allowed);
  });

  it('compares the port too (a dev server origin)', () => {
    expect(isAllowedNavigation('http://127.0.0.1:5173/', 'http://127.0.0.1:5173')).toBe(true);
    expect(isAllowedNavigation('http://127.0.0.1:5174/', 'http://127.0.0.1:5173')).toBe(false);
  });

  it('builds origins for non-special schemes, where URL.origin is "null"', () => {
    expect(new URL(`${APP_ORIGIN}/x`).origin).toBe('null');
    expect(originOf(`${APP_ORIGIN}/x`)).toBe(APP_ORIGIN);
  });

  it('denies every new window and every permission', () => {
    expect(windowOpenDecision()).toEqual({ action: 'deny' });
    for (const permission of ['media', 'geolocation', 'notifications', 'clipboard-read', 'openExternal']) {
      expect(permissionDecision(permission)).toBe(false);
    }
  });

  it('guardWebContents prevents foreign navigation and redirects, any <webview>, and window.open', () => {
    const handlers = new Map<string, (event: { url: string; preventDefault(): void }) => void>();
    let openHandler: (() => unknown) | undefined;
    const contents = {
      on(name: string, handler: (event: { url: string; preventDefault(): void }) => void) {
        handlers.set(name, handler);
        return this;
      },
      setWindowOpenHandler(handler: () => unknown) {
        openHandler = handler;
      },
    };
    guardWebContents(contents as never, APP_ORIGIN);
    const fire = (name: string, url: string): boolean => {
      let prevented = false;
      handlers.get(name)?.({ url, preventDefault: () => (prevented = true) });
      return prevented;
    };
    expect(fire('will-navigate', 'https://example.org/')).toBe(true);
    expect(fire('will-navigate', `${APP_ORIGIN}/index.html`)).toBe(false);
    expect(fire('will-redirect', 'http://127.0.0.1:9/')).toBe(true);
    expect(fire('will-attach-webview', `${APP_ORIGIN}/index.html`)).toBe(true);
    expect(openHandler?.()).toEqual({ action: 'deny' });
  });
});
