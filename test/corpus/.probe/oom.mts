import { createWasmNodeEngine } from '../../../app/engine/wasm-node.ts';
const e = await createWasmNodeEngine();
for (const sql of ["SET memory_limit = '20MB'", "SELECT current_setting('memory_limit') AS m", "SELECT count(*) FROM (SELECT range % 3000000 AS k, list(range) AS l FROM range(6000000) GROUP BY 1)", "SELECT string_agg(CAST(range AS VARCHAR), ',') FROM range(10000000)"]) {
  const t = Date.now();
  try { const r = await e.query(sql); console.log('OK', sql, JSON.stringify(r.columns).slice(0, 80), Date.now() - t); } catch (x) { console.log('ERR', sql, (x as any).code, (x as Error).message.slice(0, 300), Date.now() - t); }
}
await e.close();
