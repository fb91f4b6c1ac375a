/**
 * Writes each query of one native audit of <log> to <prefix>-<name>.sql, with the relation renamed
 * `src`, for bench/cpu-time.ts:  node --import tsx bench/dump-queries.ts <log> <prefix>
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { runAudit } from '../app/core/audit.ts';
import { createNativeEngine } from '../app/engine/native.ts';
const V9 = new URL('../sample-data/maple-row-v9-policy.csv', import.meta.url).pathname;
if (!process.argv[2] || !process.argv[3]) throw new Error('usage: bench/dump-queries.ts <log> <prefix>');
const engine = await createNativeEngine();
const src = await engine.register({ kind: 'path', paths: [process.argv[2]!] });
const r = await runAudit((sql) => engine.query(sql), { relation: src.relation, input: { files: [], format: src.format }, engine: 'native', targets: [{ spec: `table:${V9}`, tableText: readFileSync(V9, 'utf8') }] });
for (const q of r.queries) { writeFileSync(`${process.argv[3]}-${q.name.split(' ')[0]}.sql`, q.sql.replaceAll(src.relation, 'src')); }
console.log(r.queries.map((q) => q.name).join(', '));
await engine.close();
