/// <reference lib="webworker" />
import { sha256Blob } from './file-digest.ts';
import type { DigestReply, DigestRequest } from './digest-messages.ts';

self.onmessage = async (event: MessageEvent<DigestRequest>) => {
  const request = event.data;
  if (request?.kind !== 'digest' || !(request.file instanceof Blob)) return;
  try {
    self.postMessage({ kind: 'digest', id: request.id, sha256: await sha256Blob(request.file) } satisfies DigestReply);
  } catch (error) {
    self.postMessage({ kind: 'error', id: request.id, message: String(error) } satisfies DigestReply);
  }
};
