import { DuckDBInstance } from '@duckdb/node-api';
const i = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
const c = await i.connect();
const d = '/work/main/test/corpus/files/';
for (const sql of process.argv.slice(2)) {
  try { const r = await c.run(sql.replaceAll('D/', d)); console.log(JSON.stringify((await r.getRowObjectsJson()).slice(0, 3))); } catch (e) { console.log('ERR>>>' + (e as Error).message + '<<<'); }
}
