import { randomBytes, timingSafeEqual } from 'node:crypto';

export const ENGINE_PATH = '/engine';
export const LOOPBACK = '127.0.0.1';

/** A fresh secret for each launch: 32 random bytes, hex. */
export function newToken(): string {
  return randomBytes(32).toString('hex');
}

/** Constant-time comparison, so the token cannot be guessed one character at a time. */
export function tokensEqual(given: string, expected: string): boolean {
  const a = Buffer.from(given, 'utf8');
  const b = Buffer.from(expected, 'utf8');
  return a.length === b.length && timingSafeEqual(a, b);
}

export interface UpgradeRequest {
  url: string | undefined;
  origin: string | undefined;
  host: string | undefined;
}

export type UpgradeDecision = { ok: true } | { ok: false; status: 400 | 401 | 403 | 404; reason: string };

export interface AccessPolicy {
  token: string;
  /** The only page origin allowed to open the engine socket, e.g. http://127.0.0.1:5178. */
  origin: string;
  /** Host header values the server answers to; others are refused (DNS rebinding). */
  hosts: readonly string[];
}

/**
 * Whether a WebSocket upgrade to the engine may proceed. Browsers always send Origin on a WebSocket
 * handshake, so a missing one means a non-browser client, which also has to match.
 */
export function checkUpgrade(request: UpgradeRequest, policy: AccessPolicy): UpgradeDecision {
  if (request.host === undefined || !policy.hosts.includes(request.host.toLowerCase())) {
    return { ok: false, status: 403, reason: 'unexpected Host header' };
  }
  let url: URL;
  try {
    url = new URL(request.url ?? '', `http://${request.host}`);
  } catch {
    return { ok: false, status: 400, reason: 'malformed request URL' };
  }
  if (url.pathname !== ENGINE_PATH) return { ok: false, status: 404, reason: `no socket at ${url.pathname}` };
  if (request.origin !== policy.origin) return { ok: false, status: 403, reason: 'origin not allowed' };
  const token = url.searchParams.get('token');
  if (token === null || token === '') return { ok: false, status: 401, reason: 'token required' };
  if (!tokensEqual(token, policy.token)) return { ok: false, status: 401, reason: 'wrong token' };
  return { ok: true };
}

/** Host header values that reach this server on the loopback interface. */
export function loopbackHosts(port: number): string[] {
  return [`${LOOPBACK}:${port}`, `localhost:${port}`];
}

/**
 * The address a user opens: the page, told where the engine socket is and which token to use, in the
 * URL fragment. A fragment is never sent to a server nor put in a Referer, and the page removes it from
 * the address bar as it loads (renderer/engine/choose-backend.ts), so the token stays out of the
 * browser's history and restored sessions.
 */
export function hostedUrl(port: number, token: string): string {
  const socket = `ws://${LOOPBACK}:${port}${ENGINE_PATH}`;
  return `http://${LOOPBACK}:${port}/#host=${encodeURIComponent(socket)}&token=${token}`;
}
