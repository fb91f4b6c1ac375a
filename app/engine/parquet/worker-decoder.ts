/**
 * A RowGroupDecoder whose decoding runs in a worker of its own (decode.worker.ts), so parquet-wasm never
 * holds the page's thread: each reader starts a worker, hands it the Blob, and asks for one row group at a
 * time; the worker is ended when the reader closes. Requests are answered in order, one at a time.
 */
import type { RowGroupDecoder, RowGroupReader } from './decoder.ts';
import { DecodeReplySchema } from './decode-messages.ts';
import type { DecodeReply, DecodeRequest } from './decode-messages.ts';

/** The part of a Worker the decoder uses (a browser Worker). */
export interface DecodeWorker {
  postMessage(message: DecodeRequest): void;
  onmessage: ((event: MessageEvent<unknown>) => void) | null;
  onerror: ((event: ErrorEvent) => void) | null;
  terminate(): void;
}

export function workerDecoder(start: () => DecodeWorker): RowGroupDecoder {
  return async (blob) => {
    const worker = start();
    let sequence = 0;
    const pending = new Map<number, { resolve: (reply: DecodeReply) => void; reject: (error: Error) => void }>();
    const failAll = (error: Error) => {
      for (const p of pending.values()) p.reject(error);
      pending.clear();
    };
    worker.onmessage = (event) => {
      const parsed = DecodeReplySchema.safeParse(event.data);
      if (!parsed.success) return;
      const waiting = pending.get(parsed.data.id);
      if (!waiting) return;
      pending.delete(parsed.data.id);
      if (parsed.data.kind === 'error') waiting.reject(new Error(parsed.data.message));
      else waiting.resolve(parsed.data);
    };
    worker.onerror = (event) => failAll(new Error(`the Parquet decode worker failed: ${event.message || 'it could not start'}`));
    const ask = (request: DecodeRequest) => new Promise<DecodeReply>((resolve, reject) => {
      pending.set(request.id, { resolve, reject });
      worker.postMessage(request);
    });
    try {
      await ask({ kind: 'open', id: ++sequence, file: blob });
    } catch (error) {
      worker.terminate();
      throw error;
    }
    const reader: RowGroupReader = {
      async rowGroup(index, columns, rows) {
        const answer = await ask({ kind: 'row-group', id: ++sequence, index, columns: [...columns], rows });
        if (answer.kind !== 'row-group') throw new Error(`the Parquet decode worker answered "${answer.kind}" to a row-group request`);
        return answer.ipc;
      },
      close() {
        failAll(new Error('the Parquet reader was closed'));
        worker.terminate();
      },
    };
    return reader;
  };
}
