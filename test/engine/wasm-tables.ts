/**
 * DuckDB-Wasm's Node build holding Arrow IPC tables, as the page's worker does (app/engine/wasm-browser.ts
 * WasmArrowTables): the same load and query calls, run synchronously here.
 */
import { createRequire } from 'node:module';
import type * as DuckDBBlocking from '@duckdb/duckdb-wasm/blocking';
import { tableFromIpcChunks } from '../../app/engine/convert/arrow.ts';
import type { WasmArrowTables } from '../../app/engine/wasm-browser.ts';

const require = createRequire(import.meta.url);

export async function createNodeArrowTables(): Promise<WasmArrowTables & { close(): void }> {
  const duckdb = require('@duckdb/duckdb-wasm/dist/duckdb-node-blocking.cjs') as typeof DuckDBBlocking;
  const db = await duckdb.createDuckDB({
    mvp: { mainModule: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-mvp.wasm'), mainWorker: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-node-mvp.worker.cjs') },
    eh: { mainModule: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-eh.wasm'), mainWorker: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-node-eh.worker.cjs') },
  }, new duckdb.VoidLogger(), duckdb.NODE_RUNTIME);
  await db.instantiate(() => undefined);
  db.open({ query: { castBigIntToDouble: false, castDecimalToDouble: false } });
  const conn = db.connect();
  const id = conn.useUnsafe((_b, c) => c);
  db.runQuery(id, 'SET autoload_known_extensions = false');
  db.runQuery(id, 'SET autoinstall_known_extensions = false');
  return {
    async load(name, ipc) {
      db.runQuery(id, `DROP TABLE IF EXISTS "${name.replaceAll('"', '""')}"`);
      db.insertArrowFromIPCStream(id, ipc.slice(), { name, create: true });
    },
    async query(sql) {
      return tableFromIpcChunks([db.runQuery(id, sql)]);
    },
    close() {
      conn.close();
      db.reset();
    },
  };
}
