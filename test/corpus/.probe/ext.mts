import { DuckDBInstance } from '@duckdb/node-api';
const f = '/work/main/test/corpus/files/good.parquet';
const g = '/work/main/test/corpus/files/single-row.csv';
async function tryRun(c: any, sql: string) { try { const r = await c.run(sql); console.log('OK ', sql.slice(0, 90), JSON.stringify((await r.getRowObjectsJson()).slice(0, 1))); } catch (e) { console.log('ERR', sql.slice(0, 90), '=>', (e as Error).message.split('\n')[0]); } }
{
  const i = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false', enable_external_access: 'false' });
  const c = await i.connect();
  await tryRun(c, `SET allowed_paths = ['${f}']`);
  await tryRun(c, `SELECT count(*) FROM read_parquet('${f}')`);
  await tryRun(c, `CREATE VIEW v AS SELECT * FROM read_parquet(['${f}'])`);
  await tryRun(c, `SELECT count(*) FROM v`);
  await tryRun(c, `SELECT count(*) FROM read_csv('${g}')`);
  await tryRun(c, `SELECT * FROM glob('/work/main/test/corpus/files/*')`);
  await tryRun(c, `COPY (SELECT 1) TO '/tmp/cwp/x.csv'`);
  await tryRun(c, `SET allowed_paths = ['${f}', '${g}']`);
  await tryRun(c, `SELECT count(*) FROM read_csv('${g}')`);
  await tryRun(c, `SET lock_configuration = true`);
  await tryRun(c, `SET allowed_paths = ['/etc/passwd']`);
  await tryRun(c, `SET enable_external_access = true`);
  await tryRun(c, `RESET allowed_paths`);
  await tryRun(c, `SELECT count(*) FROM read_csv('${g}')`);
  await tryRun(c, `ATTACH '/tmp/cwp/x.db'`);
  await tryRun(c, `SELECT * FROM read_text('/etc/hostname')`);
  await tryRun(c, `INSTALL httpfs`);
  await tryRun(c, `LOAD json`);
  await tryRun(c, `SET lock_configuration = false`);
}
{
  console.log('--- directories');
  const i = await DuckDBInstance.create(':memory:', { enable_external_access: 'false', allowed_directories: "['/work/main/test/corpus/files/mixed-schema/']" } as any);
  const c = await i.connect();
  await tryRun(c, `SELECT count(*) FROM read_parquet('/work/main/test/corpus/files/mixed-schema/*.parquet', union_by_name=true)`);
  await tryRun(c, `SELECT * FROM glob('/work/main/test/corpus/files/mixed-schema/*')`);
  await tryRun(c, `SELECT count(*) FROM read_parquet('/work/main/test/corpus/files/mixed-schema/../good.parquet')`);
}
