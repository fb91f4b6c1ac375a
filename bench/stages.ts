/**
 * Wall and process CPU time of each query of one full audit, in seconds, on the native engine or on
 * DuckDB-Wasm in Node (where opening a Parquet log loads it into DuckDB-Wasm's memory: that load is timed too),
 * with the process's peak RSS so far after each:
 *   node --import tsx bench/stages.ts <log path> [threads] [memory_limit, e.g. 1.5GB] [--wasm] [--no-groups]
 * The audit is given the engine's projection and row-groups hooks, as the command gives them (app/cli/sources.ts,
 * projectionOf); --no-groups withholds the row-groups hook, so that the cube, tails and clip rows each read the log.
 */
import { readFileSync } from 'node:fs';
import { runAudit } from '../app/core/audit.ts';
import { createNativeEngine } from '../app/engine/native.ts';
import { createWasmNodeEngine } from '../app/engine/wasm-node.ts';
import { projectionOf } from '../app/engine/audit-hooks.ts';
import { stageOf } from './stage-label.ts';
import { peakRssMb } from '../app/engine/memory.ts';

const V9 = new URL('../sample-data/maple-row-v9-policy.csv', import.meta.url).pathname;
const wasm = process.argv.includes('--wasm');
const noGroups = process.argv.includes('--no-groups');
const [path, threadsArg, memoryLimit] = process.argv.slice(2).filter((a) => a !== '--wasm' && a !== '--no-groups');
if (!path) throw new Error('usage: bench/stages.ts <log path> [threads] [memory_limit] [--wasm]');
const threads = threadsArg ? Number(threadsArg) : undefined;
const engine = wasm ? await createWasmNodeEngine({ onParquetLoad: (t) => console.log(`load: ${JSON.stringify(Object.fromEntries(Object.entries(t).map(([k, v]) => [k, k === 'appends' ? v : +(v / 1000).toFixed(2)])))} (s)`) }) : await createNativeEngine({ ...(threads ? { threads } : {}), ...(memoryLimit ? { memoryLimit } : {}) });
if (memoryLimit && !wasm) await engine.query(`SET temp_directory = '${new URL('./cache/spill/', import.meta.url).pathname}'`);
const open0 = performance.now();
const openCpu0 = process.cpuUsage();
const src = await engine.register({ kind: 'path', paths: [path] });
const openCpu = process.cpuUsage(openCpu0);
console.log(`open: ${((performance.now() - open0) / 1000).toFixed(3)} s wall, ${((openCpu.user + openCpu.system) / 1e6).toFixed(2)} s CPU`);
for (let round = 0; round < 2; round++) {
  const times: [string, number, number, number, number][] = [];
  let label = '';
  const t0 = performance.now();
  const cpu0 = process.cpuUsage();
  const { project, materialise } = projectionOf(engine, src.relation);
  const timedMaterialise = materialise && !noGroups ? async (select: string) => {
    const s = performance.now();
    const c0 = process.cpuUsage();
    const table = await materialise(select);
    const c = process.cpuUsage(c0);
    times.push([`row groups @${((s - t0) / 1000).toFixed(2)}`, (performance.now() - s) / 1000, (c.user + c.system) / 1e6, NaN, peakRssMb()]);
    return table;
  } : undefined;
  await runAudit(async (sql) => {
    label = stageOf(sql);
    const s = performance.now();
    const c0 = process.cpuUsage();
    const t = await engine.query(sql);
    const c = process.cpuUsage(c0);
    times.push([`${label} @${((s - t0) / 1000).toFixed(2)}`, (performance.now() - s) / 1000, (c.user + c.system) / 1e6, t.rowCount, peakRssMb()]);
    return t;
  }, { relation: src.relation, input: { files: [], format: src.format }, engine: engine.kind, targets: [{ spec: `table:${V9}`, tableText: readFileSync(V9, 'utf8') }], ...(project ? { project } : {}), ...(timedMaterialise ? { materialise: timedMaterialise } : {}) });
  const total = (performance.now() - t0) / 1000;
  const cpu = process.cpuUsage(cpu0);
  console.log(`round ${round}: total ${total.toFixed(3)} s wall, ${((cpu.user + cpu.system) / 1e6).toFixed(2)} s CPU`);
  for (const [n, s, c, r, m] of times) console.log(`  ${n.padEnd(11)} ${s.toFixed(3)} s  ${c.toFixed(2)} s CPU  ${r} rows  peak RSS ${m} MB so far`);
}
await engine.close();
