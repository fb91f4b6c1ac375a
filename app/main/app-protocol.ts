import type { Protocol } from 'electron';
import { readFile } from 'node:fs/promises';
import { contentTypeFor, resolveAsset } from './static-assets.ts';

/**
 * The built renderer is served from a privileged custom scheme rather than file://, so it has a real
 * origin for 'self' in the CSP, for fetching DuckDB-Wasm's .wasm and for starting its worker.
 */
const APP_SCHEME = 'counterweight';
const APP_HOST = 'app';
export const APP_ORIGIN = `${APP_SCHEME}://${APP_HOST}`;
export const APP_ENTRY_URL = `${APP_ORIGIN}/index.html`;

/**
 * Must run before the app's `ready` event. `corsEnabled` stays off: the renderer loads only its own
 * origin, and the privilege would let other origins read the app's files.
 */
export function registerAppScheme(protocol: Pick<Protocol, 'registerSchemesAsPrivileged'>): void {
  protocol.registerSchemesAsPrivileged([
    { scheme: APP_SCHEME, privileges: { standard: true, secure: true, supportFetchAPI: true, stream: true } },
  ]);
}

export type ReadAsset = (filePath: string) => Promise<Uint8Array<ArrayBuffer>>;

/** Answers one app:// request from the renderer build folder, with the CSP on every response. */
export async function appResponse(root: string, requestUrl: string, policy: string, read: ReadAsset = readFile): Promise<Response> {
  const url = new URL(requestUrl);
  const headers = { 'Content-Security-Policy': policy, 'X-Content-Type-Options': 'nosniff' };
  const filePath = url.host === APP_HOST ? resolveAsset(root, url.pathname) : null;
  if (filePath === null) return new Response('Not found', { status: 404, headers });
  try {
    const body = await read(filePath);
    return new Response(body, { status: 200, headers: { ...headers, 'Content-Type': contentTypeFor(filePath) } });
  } catch {
    return new Response('Not found', { status: 404, headers });
  }
}

export function serveAppScheme(protocol: Pick<Protocol, 'handle'>, root: string, policy: string): void {
  protocol.handle(APP_SCHEME, (request) => appResponse(root, request.url, policy));
}
