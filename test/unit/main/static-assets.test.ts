import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { contentTypeFor, resolveAsset } from '../../../app/main/static-assets.ts';
import { APP_ORIGIN, appResponse } from '../../../app/main/app-protocol.ts';

const root = path.resolve('/srv/renderer');

describe('resolveAsset', () => {
  it.each([
    ['/', path.join(root, 'index.html')],
    ['/assets/app-1.js?v=2', path.join(root, 'assets', 'app-1.js')],
    ['/assets/duckdb%20eh.wasm#x', path.join(root, 'assets', 'duckdb eh.wasm')],
  ])('maps %s inside the root', (request, expected) => {
    expect(resolveAsset(root, request)).toBe(expected);
  });

  it.each(['/../secret.txt', '/assets/../../etc/passwd', '/%2e%2e/%2e%2e/etc/passwd', '/..%5c..%5cwin.ini', 'assets/x.js', '/%00.js', '/%E0%A4%A'])(
    'refuses %s',
    (request) => {
      expect(resolveAsset(root, request)).toBeNull();
    },
  );
});

describe('contentTypeFor', () => {
  it('serves .wasm as application/wasm, which streaming compilation requires', () => {
    expect(contentTypeFor('/a/duckdb-eh.wasm')).toBe('application/wasm');
    expect(contentTypeFor('/a/index.HTML')).toBe('text/html; charset=utf-8');
    expect(contentTypeFor('/a/blob.bin')).toBe('application/octet-stream');
  });
});

describe('appResponse', () => {
  const files = new Map([[path.join(root, 'index.html'), new TextEncoder().encode('<html></html>')]]);
  const read = async (p: string): Promise<Uint8Array<ArrayBuffer>> => {
    const body = files.get(p);
    if (!body) throw new Error('ENOENT');
    return body;
  };

  it('answers with the file, its type and the CSP', async () => {
    const response = await appResponse(root, `${APP_ORIGIN}/`, "default-src 'self'", read);
    expect(response.status).toBe(200);
    expect(response.headers.get('content-type')).toBe('text/html; charset=utf-8');
    expect(response.headers.get('content-security-policy')).toBe("default-src 'self'");
    expect(await response.text()).toBe('<html></html>');
  });

  it('answers 404 for missing files, traversal and other hosts, still with the CSP', async () => {
    for (const url of [`${APP_ORIGIN}/missing.js`, `${APP_ORIGIN}/%2e%2e/package.json`, 'counterweight://elsewhere/index.html']) {
      const response = await appResponse(root, url, 'p', read);
      expect(response.status, url).toBe(404);
      expect(response.headers.get('content-security-policy')).toBe('p');
    }
  });
});
