import { runAudit } from '../../../app/core/audit.ts';
import { createNativeEngine } from '../../../app/engine/native.ts';
const e = await createNativeEngine();
const src = await e.register({ kind: 'path', paths: ['test/corpus/files/actions-10k.csv'] });
const t0 = Date.now();
const qs: [number, string][] = [];
await runAudit(async (sql) => { const t = Date.now(); const r = await e.query(sql); qs.push([Date.now() - t, sql.slice(0, 40).replace(/\n/g, ' ')]); return r; }, { relation: src.relation, input: { files: [], format: 'csv' }, engine: 'native', roles: { action: 'promotion' }, onProgress: (p) => console.log(Date.now() - t0, p.stage, p.done ?? '') });
console.log(qs.sort((a, b) => b[0] - a[0]).slice(0, 5), 'total', Date.now() - t0);
await e.close();
