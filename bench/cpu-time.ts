/**
 * Back-to-back comparison of SQL statements by process CPU time (DuckDB's threads included), which other
 * load on the machine disturbs far less than wall time. The log is exposed as the view `src`.
 *
 *   node --import tsx bench/cpu-time.ts <log.parquet|log.csv> <statement or file.sql>...
 */
import { DuckDBInstance } from '@duckdb/node-api';
import { readFileSync } from 'node:fs';
const inst = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
const c = await inst.connect();
const f = process.argv[2];
if (!f) throw new Error('usage: bench/cpu-time.ts <log> <sql>...');
await c.run(`CREATE VIEW src AS SELECT * FROM ${f.endsWith('.csv') ? 'read_csv' : 'read_parquet'}('${f}')`);
for (const q of process.argv.slice(3)) {
  const sql = q.endsWith('.sql') ? readFileSync(q, 'utf8') : q;
  for (let i = 0; i < 2; i++) {
    const u = process.cpuUsage(); const t = performance.now();
    await c.run(sql);
    const cu = process.cpuUsage(u);
    console.log(`cpu ${((cu.user + cu.system) / 1e6).toFixed(3)} s  wall ${((performance.now() - t) / 1000).toFixed(3)} s  ${q.slice(0, 100).replace(/\s+/g, ' ')}`);
  }
}
