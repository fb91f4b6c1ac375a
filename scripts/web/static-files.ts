import type { IncomingMessage, ServerResponse } from 'node:http';
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { contentTypeFor, resolveAsset } from '../../app/main/static-assets.ts';

const DEMO_FILE = /^[a-z0-9][a-z0-9.-]*\.(csv|json|ndjson|parquet)$/i;

/**
 * `/sample-data/<name>` maps to a committed demo log (one plain file name, no folders), which the page
 * fetches for "Open the demo log"; anything else is null.
 */
export function demoFile(folder: string, requestPath: string): string | null {
  const match = /^\/sample-data\/([^?#/]+)(?:[?#].*)?$/.exec(requestPath);
  if (!match?.[1]) return null;
  let name: string;
  try {
    name = decodeURIComponent(match[1]);
  } catch {
    return null;
  }
  return DEMO_FILE.test(name) ? path.join(folder, name) : null;
}

/** Serves the built renderer (and the demo logs) read-only; every response carries the page's security headers. */
export async function serveStatic(
  root: string,
  request: IncomingMessage,
  response: ServerResponse,
  headers: Record<string, string>,
  demoFolder?: string,
): Promise<void> {
  const send = (status: number, body: string | Uint8Array, extra: Record<string, string> = {}): void => {
    response.writeHead(status, { ...headers, ...extra });
    response.end(request.method === 'HEAD' ? undefined : body);
  };
  if (request.method !== 'GET' && request.method !== 'HEAD') {
    send(405, 'Method not allowed', { Allow: 'GET, HEAD', 'Content-Type': 'text/plain; charset=utf-8' });
    return;
  }
  const url = request.url ?? '/';
  const filePath = (demoFolder !== undefined && url.startsWith('/sample-data/') ? demoFile(demoFolder, url) : null) ?? resolveAsset(root, url);
  if (filePath === null) {
    send(404, 'Not found', { 'Content-Type': 'text/plain; charset=utf-8' });
    return;
  }
  let body: Buffer;
  try {
    body = await readFile(filePath);
  } catch {
    send(404, 'Not found', { 'Content-Type': 'text/plain; charset=utf-8' });
    return;
  }
  send(200, body, { 'Content-Type': contentTypeFor(filePath), 'Cache-Control': 'no-cache' });
}

/** Security headers for web mode; `policy` is the renderer CSP with the engine socket allowed. */
export function pageHeaders(policy: string): Record<string, string> {
  return {
    'Content-Security-Policy': policy,
    'X-Content-Type-Options': 'nosniff',
    'Referrer-Policy': 'no-referrer',
    // Keeps the page (and its token) out of other sites' frames and process groups.
    'Cross-Origin-Opener-Policy': 'same-origin',
    'Cross-Origin-Resource-Policy': 'same-origin',
    'X-Frame-Options': 'DENY',
  };
}
