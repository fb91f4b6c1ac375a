/**
 * Experiment (issue 19, bench/NOTES.md "Text columns as ENUM"): the first N row groups of the 10M-row log appended to
 * DuckDB-Wasm in Node as they are (VARCHAR) or into a table whose five low-cardinality text columns are ENUMs
 * (their values read beforehand with native DuckDB, for the experiment only), then a few queries over a view that
 * casts them back to VARCHAR.   node --import tsx bench/enum-columns.ts text|enum [row groups, default 20]
 */
import { openAsBlob } from 'node:fs';
import { createRequire } from 'node:module';
import { DuckDBInstance } from '@duckdb/node-api';
import { parquetWasmDecoder, type ParquetWasmModule } from '../app/engine/parquet/decoder.ts';
import { rowGroupAligner, DUCKDB_ROW_GROUP_ROWS } from '../app/engine/parquet/align.ts';
import { readFooter } from '../app/engine/parquet/footer.ts';
const require = createRequire(import.meta.url);
const FILE = 'bench/cache/rows-10m/maple-row-demo.parquet';
const GROUPS = Number(process.argv[3] ?? 20);
const variant = process.argv[2]!;
const TEXT = ['region', 'device', 'tenure', 'promotion', 'policy_version'];
// distinct values (experiment only) from native DuckDB
const inst = await DuckDBInstance.create();
const nc = await inst.connect();
const desc = (await (await nc.run(`DESCRIBE SELECT * FROM '${FILE}'`)).getRows()).map((r) => [String(r[0]), String(r[1])]);
const values: Record<string, string[]> = {};
for (const c of TEXT) values[c] = (await (await nc.run(`SELECT DISTINCT "${c}" FROM '${FILE}' WHERE "${c}" IS NOT NULL ORDER BY 1`)).getRows()).map((r) => String(r[0]));
const duckdb = require('@duckdb/duckdb-wasm/dist/duckdb-node-blocking.cjs');
const bundles = { mvp: { mainModule: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-mvp.wasm'), mainWorker: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-node-mvp.worker.cjs') }, eh: { mainModule: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-eh.wasm'), mainWorker: require.resolve('@duckdb/duckdb-wasm/dist/duckdb-node-eh.worker.cjs') } };
const db = await duckdb.createDuckDB(bundles, new duckdb.VoidLogger(), duckdb.NODE_RUNTIME);
await db.instantiate(() => undefined);
db.open({ query: { castBigIntToDouble: false, castDecimalToDouble: false, castTimestampToDate: false, castDurationToTime64: false } });
const conn = db.connect();
const blob = await openAsBlob(FILE);
const footer = await readFooter(blob, FILE);
const cols = footer.schema.slice(1).map((e) => e.name);
const reader = await parquetWasmDecoder(require('parquet-wasm') as ParquetWasmModule)(blob);
const aligner = rowGroupAligner(4 * DUCKDB_ROW_GROUP_ROWS);
let created = false;
if (variant === 'enum') {
  const defs = desc.map(([n, t]) => TEXT.includes(n!) ? `"${n}" ENUM(${values[n!]!.map((v) => `'${v}'`).join(', ')})` : `"${n}" ${t}`);
  conn.query(`CREATE TABLE t (${defs.join(', ')})`);
  created = true;
}
let appendMs = 0;
const cpu0 = process.cpuUsage();
for (let g = 0; g < GROUPS; g++) {
  const ipc = await reader.rowGroup(g, cols, Number(footer.row_groups[g]!.num_rows));
  for (const piece of aligner.push(ipc)) {
    const t0 = performance.now();
    conn.insertArrowFromIPCStream(piece, { name: 't', create: !created });
    created = true;
    appendMs += performance.now() - t0;
  }
}
const cpu1 = process.cpuUsage(cpu0);
const view = variant === 'enum' ? `SELECT ${desc.map(([n]) => TEXT.includes(n!) ? `CAST("${n}" AS VARCHAR) AS "${n}"` : `"${n}"`).join(', ')} FROM t` : 'SELECT * FROM t';
conn.query(`CREATE VIEW v AS ${view}`);
const rows = conn.query('SELECT count(*)::INTEGER AS n FROM v').toArray()[0].n;
const q = (label: string, sql: string) => { const t0 = performance.now(); const r = conn.query(sql); console.log(label, ((performance.now() - t0) / 1000).toFixed(2), 's', JSON.stringify(r.toArray().slice(0, 2).map((x: { toJSON(): unknown }) => x.toJSON()), (_k, v) => typeof v === 'bigint' ? Number(v) : v).slice(0, 160)); };
console.log(variant, 'rows', rows, 'append s', (appendMs / 1000).toFixed(2), 'cpu s (decode+append)', ((cpu1.user + cpu1.system) / 1e6).toFixed(2));
console.log('types', JSON.stringify(conn.query('DESCRIBE v').toArray().map((r: { column_name: string; column_type: string }) => `${r.column_name} ${r.column_type}`)));
for (let k = 0; k < 2; k++) {
  q('group4+p', `SELECT count(*) AS groups, sum(c) AS n FROM (SELECT coalesce(CAST("region" AS VARCHAR), '(null)') a, coalesce(CAST("device" AS VARCHAR), '(null)') b, coalesce(CAST("tenure" AS VARCHAR), '(null)') c2, coalesce(CAST("promotion" AS VARCHAR), '(null)') d, TRY_CAST(propensity AS DOUBLE) p, count(*) c FROM v GROUP BY ALL)`);
  q('distinct', `SELECT count(DISTINCT region) a, min(device) b, max(policy_version) c, sum(CASE WHEN regexp_matches(tenure, '^[0-9]') THEN 1 ELSE 0 END) d FROM v`);
  q('groupingsets', `SELECT count(*) FROM (SELECT region, device, tenure, promotion, policy_version, count(*) FROM v GROUP BY GROUPING SETS ((region), (device), (tenure), (promotion), (policy_version)))`);
}
reader.close();
