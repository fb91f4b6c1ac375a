/// <reference lib="webworker" />
import { Sha256 } from './sha256.ts';
import type { DigestReply, DigestRequest } from './digest-messages.ts';

const CHUNK = 8 * 1024 * 1024;

self.onmessage = async (event: MessageEvent<DigestRequest>) => {
  const request = event.data;
  if (request?.kind !== 'digest' || !(request.file instanceof Blob)) return;
  try {
    const hash = new Sha256();
    for (let at = 0; at < request.file.size; at += CHUNK) {
      hash.update(new Uint8Array(await request.file.slice(at, at + CHUNK).arrayBuffer()));
    }
    self.postMessage({ kind: 'digest', id: request.id, sha256: hash.hex() } satisfies DigestReply);
  } catch (error) {
    self.postMessage({ kind: 'error', id: request.id, message: String(error) } satisfies DigestReply);
  }
};
