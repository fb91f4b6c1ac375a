/**
 * The Parquet decode worker's protocol (app/engine/parquet/decode-messages.ts, decode-service.ts,
 * worker-decoder.ts), run in Node with the worker's service behind a stand-in Worker that passes every
 * message through structuredClone with its transfer list, as postMessage does: row groups come back as
 * the same Arrow the in-process decoder gives, the buffers are transferred (the sender's copy is detached),
 * a decoding failure reaches the caller with the decoder's message, and a malformed message is ignored.
 */
import { mkdtempSync, openAsBlob, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { tableFromIPC } from 'apache-arrow';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parquetWasmDecoder } from '../../app/engine/parquet/decoder.ts';
import type { ParquetWasmModule } from '../../app/engine/parquet/decoder.ts';
import { decodeService } from '../../app/engine/parquet/decode-service.ts';
import type { DecodeRequest } from '../../app/engine/parquet/decode-messages.ts';
import { workerDecoder } from '../../app/engine/parquet/worker-decoder.ts';
import type { DecodeWorker } from '../../app/engine/parquet/worker-decoder.ts';

const module = createRequire(import.meta.url)('parquet-wasm') as ParquetWasmModule;

let dir: string;
let file: string;
beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'cw-parquet-worker-'));
  file = join(dir, 'log.parquet');
  const db = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
  const c = await db.connect();
  await c.run(`COPY (SELECT i::BIGINT AS id, 'd-' || i::VARCHAR AS decision_id, (1 + i % 4) / 10.0 AS propensity FROM range(10000) t(i)) TO '${file}' (FORMAT parquet, ROW_GROUP_SIZE 4096)`);
  c.closeSync();
  db.closeSync();
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

// A browser File clones across postMessage; Node's file-backed Blob does not, so the stand-in gets the bytes as a Blob.
const cloneableBlob = () => new Blob([readFileSync(file)]);

type StandIn = DecodeWorker & { terminated: boolean };

/** A Worker stand-in: messages cross by structuredClone with their transfer lists, each in a later task. */
function standInWorker(transferred: ArrayBuffer[]): StandIn {
  const handle = decodeService(async () => module);
  const worker: StandIn = {
    terminated: false,
    onmessage: null,
    onerror: null,
    postMessage(message: DecodeRequest) {
      const inbound = structuredClone(message);
      setTimeout(() => void handle(inbound, (reply, transfer) => {
        const outbound: unknown = structuredClone(reply, { transfer });
        transferred.push(...(transfer as ArrayBuffer[]));
        setTimeout(() => worker.onmessage?.({ data: outbound } as MessageEvent<unknown>), 0);
      }), 0);
    },
    terminate() { worker.terminated = true; },
  };
  return worker;
}

describe('the Parquet decode worker', () => {
  it('answers each row group as the in-process decoder does, its buffer transferred', async () => {
    const transferred: ArrayBuffer[] = [];
    const started: StandIn[] = [];
    const reader = await workerDecoder(() => { const w = standInWorker(transferred); started.push(w); return w; })(cloneableBlob());
    const local = await parquetWasmDecoder(module)(await openAsBlob(file));
    for (const [index, rows] of [[0, 4096], [2, 1808]] as const) {
      const viaWorker = tableFromIPC(await reader.rowGroup(index, ['decision_id', 'propensity'], rows));
      const inProcess = tableFromIPC(await local.rowGroup(index, ['decision_id', 'propensity'], rows));
      expect(viaWorker.numRows).toBe(rows);
      expect(viaWorker.schema.fields.map((f) => f.name)).toEqual(['decision_id', 'propensity']);
      expect(viaWorker.toArray().map((r) => JSON.stringify(r))).toEqual(inProcess.toArray().map((r) => JSON.stringify(r)));
    }
    // postMessage with a transfer list detaches the sender's buffer (HTML Standard, StructuredSerializeWithTransfer).
    expect(transferred).toHaveLength(2);
    for (const b of transferred) expect(b.byteLength).toBe(0);
    reader.close();
    local.close();
    expect(started.map((w) => w.terminated)).toEqual([true]);
  });

  it('passes a decoding failure on with the decoder\'s message', async () => {
    const reader = await workerDecoder(() => standInWorker([]))(cloneableBlob());
    await expect(reader.rowGroup(0, ['no_such_column'], 4096)).rejects.toThrow(/no_such_column/);
    reader.close();
  });

  it('ignores a message outside the protocol and still answers the next one', async () => {
    const handle = decodeService(async () => module);
    const replies: unknown[] = [];
    await handle({ kind: 'row-group', id: 1, index: -1, columns: [], rows: 0 }, (m) => replies.push(m));
    await handle({ kind: 'sql', id: 2, text: 'COPY t TO x' }, (m) => replies.push(m));
    expect(replies).toEqual([]);
    await handle({ kind: 'row-group', id: 3, index: 0, columns: ['id'], rows: 10 }, (m) => replies.push(m));
    expect(replies).toEqual([{ kind: 'error', id: 3, message: 'no Parquet file is open' }]);
  });
});
