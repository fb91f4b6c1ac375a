import { DuckDBInstance } from '@duckdb/node-api';
const f = '/work/main/test/corpus/files/good.parquet';
const g = '/work/main/test/corpus/files/single-row.csv';
async function tryRun(c: any, sql: string) { try { const r = await c.run(sql); console.log('OK ', sql.slice(0, 100), JSON.stringify((await r.getRowObjectsJson()).slice(0, 1)).slice(0, 200)); } catch (e) { console.log('ERR', sql.slice(0, 100), '=>', (e as Error).message.split('\n')[0]); } }
const i = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
const c = await i.connect();
await tryRun(c, `SET allowed_paths = ['${f}']`);
await tryRun(c, `CREATE VIEW v AS SELECT * FROM read_parquet(['${f}'])`);
await tryRun(c, `SET enable_external_access = false`);
await tryRun(c, `SELECT count(*) FROM v`);
await tryRun(c, `SELECT count(*) FROM read_csv('${g}')`);
await tryRun(c, `SET enable_external_access = true`);
await tryRun(c, `SELECT json_serialize_sql('DESCRIBE SELECT * FROM v')`);
await tryRun(c, `SELECT json_serialize_sql('SELECT 1; SELECT 2')`);
await tryRun(c, `SELECT json_serialize_sql('COPY (SELECT 1) TO ''x''')`);
await tryRun(c, `SELECT json_serialize_sql('SET x = 1')`);
await tryRun(c, `SELECT json_serialize_sql('WITH a AS (SELECT 1) SELECT * FROM a')`);
