/**
 * Time of each query of one full audit on the native engine, in seconds:
 *   node --import tsx bench/stages.ts <log path> [threads]
 */
import { readFileSync } from 'node:fs';
import { runAudit } from '../app/core/audit.ts';
import { createNativeEngine } from '../app/engine/native.ts';

const V9 = new URL('../sample-data/maple-row-v9-policy.csv', import.meta.url).pathname;
const path = process.argv[2];
if (!path) throw new Error('usage: bench/stages.ts <log path> [threads]');
const threads = process.argv[3] ? Number(process.argv[3]) : undefined;
const engine = await createNativeEngine(threads ? { threads } : {});
const src = await engine.register({ kind: 'path', paths: [path] });
for (let round = 0; round < 2; round++) {
  const times: [string, number, number][] = [];
  let label = '';
  const t0 = performance.now();
  await runAudit(async (sql) => {
    const name = /^DESCRIBE/.test(sql) ? 'describe' : /approx_count_distinct/.test(sql) ? 'profile' : /AS n_p_null/.test(sql) ? 'cube' : /rows_in_duplicates/.test(sql) ? 'duplicates' : /__finding/.test(sql) ? 'examples' : /w DESC/.test(sql) ? 'tail' : 'other';
    label = name;
    const s = performance.now();
    const t = await engine.query(sql);
    times.push([`${label} @${((s - t0) / 1000).toFixed(2)}`, (performance.now() - s) / 1000, t.rowCount]);
    return t;
  }, { relation: src.relation, input: { files: [], format: src.format }, engine: 'native', targets: [{ spec: `table:${V9}`, tableText: readFileSync(V9, 'utf8') }] });
  const total = (performance.now() - t0) / 1000;
  console.log(`round ${round}: total ${total.toFixed(3)} s`);
  for (const [n, s, r] of times) console.log(`  ${n.padEnd(11)} ${s.toFixed(3)} s  ${r} rows`);
}
await engine.close();
