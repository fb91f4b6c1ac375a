import type { InputFile } from '../../app/core/model/report.ts';
import { isDigestReply, type DigestRequest } from './digest-messages.ts';

/** Hashes each File in a worker so a large log never blocks the page. */
export async function describeFiles(files: readonly File[]): Promise<InputFile[]> {
  const worker = new Worker(new URL('./digest.worker.ts', import.meta.url), { type: 'module' });
  try {
    const out: InputFile[] = [];
    for (const [id, file] of files.entries()) {
      const sha256 = await new Promise<string>((resolve, reject) => {
        worker.onmessage = (event: MessageEvent<unknown>) => {
          const reply = event.data;
          if (!isDigestReply(reply) || reply.id !== id) return;
          if (reply.kind === 'digest') resolve(reply.sha256);
          else reject(new Error(`could not read ${file.name}: ${reply.message}`));
        };
        worker.onerror = (e) => reject(new Error(`could not read ${file.name}: ${e.message}`));
        worker.postMessage({ kind: 'digest', id, file } satisfies DigestRequest);
      });
      out.push({ path: file.name, bytes: file.size, sha256, modified: new Date(file.lastModified).toISOString() });
    }
    return out;
  } finally {
    worker.terminate();
  }
}
