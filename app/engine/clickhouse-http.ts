/**
 * One HTTP POST to ClickHouse's HTTP interface with node:http, the answer's body as a stream of chunks.
 * Node's global fetch (undici) waits at most 300 s for an answer head and 300 s between body chunks, and
 * ClickHouse sends the head of an aggregate only when it has its first rows, so a statement longer than
 * that failed on the client while the server was still working. Here the only waits are the caller's: the
 * statement's own time limit (the adapter's timer and abort signal) and `idleMs`, the longest the socket
 * may stay silent, which the adapter sets to that same limit. Keep-alive sockets come from the caller's
 * Agent. Errors are node's socket errors (code ECONNREFUSED, ECONNRESET, ...), read by networkError().
 */
import { request, type Agent, type IncomingMessage } from 'node:http';

export interface PostOptions {
  readonly agent: Agent;
  readonly headers: Readonly<Record<string, string>>;
  readonly body: string;
  readonly signal?: AbortSignal;
  /** the longest the socket may stay silent (no head, no body chunk) before the request fails */
  readonly idleMs: number;
}

export interface HttpAnswer {
  readonly status: number;
  /** the body, chunk by chunk as it arrives; a failed or aborted stream throws while iterated */
  readonly body: AsyncIterable<Uint8Array>;
  /** stop reading: the socket is closed, not returned to the pool */
  cancel(): void;
  text(): Promise<string>;
}

export class IdleTimeoutError extends Error {
  readonly code = 'CW_IDLE_TIMEOUT';
  constructor(readonly idleMs: number) {
    super(`no data for ${idleMs} ms`);
  }
}

export function post(url: string, options: PostOptions): Promise<HttpAnswer> {
  return new Promise((resolve, reject) => {
    const payload = Buffer.from(options.body, 'utf8');
    const req = request(url, {
      method: 'POST',
      agent: options.agent,
      headers: { ...options.headers, 'Content-Length': String(payload.byteLength) },
      signal: options.signal,
    });
    req.setTimeout(options.idleMs, () => req.destroy(new IdleTimeoutError(options.idleMs)));
    req.on('error', reject);
    req.on('response', (res: IncomingMessage) => {
      // from here a socket error surfaces in the body's iteration
      req.off('error', reject);
      req.on('error', () => {});
      resolve({
        status: res.statusCode ?? 0,
        body: res,
        cancel: () => { res.destroy(); req.destroy(); },
        text: async () => {
          const chunks: Buffer[] = [];
          for await (const c of res) chunks.push(c as Buffer);
          return Buffer.concat(chunks).toString('utf8');
        },
      });
    });
    req.end(payload);
  });
}
