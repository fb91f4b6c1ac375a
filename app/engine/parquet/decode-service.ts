/**
 * What the Parquet decode worker does with each message (decode-messages.ts), apart from the worker's
 * global scope so it can be tested in Node: open one Blob, then answer each row-group request with Arrow
 * IPC bytes, transferred rather than copied; anything that fails is answered as an error naming it.
 */
import { parquetWasmDecoder } from './decoder.ts';
import type { ParquetWasmModule, RowGroupReader } from './decoder.ts';
import { DecodeRequestSchema } from './decode-messages.ts';
import type { DecodeReply } from './decode-messages.ts';

export type Reply = (message: DecodeReply, transfer: Transferable[]) => void;

export function decodeService(module: () => Promise<ParquetWasmModule>): (message: unknown, reply: Reply) => Promise<void> {
  let reader: RowGroupReader | null = null;
  return async (message, reply) => {
    const parsed = DecodeRequestSchema.safeParse(message);
    if (!parsed.success) return;
    const request = parsed.data;
    try {
      if (request.kind === 'open') {
        reader?.close();
        reader = await parquetWasmDecoder(await module())(request.file);
        reply({ kind: 'opened', id: request.id }, []);
        return;
      }
      if (!reader) throw new Error('no Parquet file is open');
      const decoded = await reader.rowGroup(request.index, request.columns, request.rows);
      // Transfer only a buffer that holds exactly these bytes (never a view into a larger one).
      const ipc = (decoded.byteOffset === 0 && decoded.byteLength === decoded.buffer.byteLength ? decoded : decoded.slice()) as Uint8Array<ArrayBuffer>;
      reply({ kind: 'row-group', id: request.id, ipc }, [ipc.buffer]);
    } catch (error) {
      reply({ kind: 'error', id: request.id, message: error instanceof Error ? error.message : String(error) }, []);
    }
  };
}
