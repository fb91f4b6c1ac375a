import { execFile } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildElectron, packaging, ROOT } from '../../../electron.config.ts';

const run = promisify(execFile);
const DEMO = path.join(ROOT, 'sample-data', 'maple-row-demo.csv');
const DEMO_ROWS = (JSON.parse(readFileSync(path.join(ROOT, 'sample-data', 'maple-row-demo.manifest.json'), 'utf8')) as { generator: { rows: number } }).generator.rows;

function requires(code: string): string[] {
  return [...new Set([...code.matchAll(/require\("([^"]+)"\)/g)].map((m) => m[1] ?? ''))].sort();
}

describe('desktop bundles (esbuild, electron.config.ts)', () => {
  let out = '';
  beforeAll(async () => {
    out = await mkdtemp(path.join(os.tmpdir(), 'cw-electron-'));
    await buildElectron(ROOT, out);
  });
  afterAll(async () => {
    if (out) await rm(out, { recursive: true, force: true });
  });

  it('the sandboxed preload requires nothing but electron', async () => {
    const preload = await readFile(path.join(out, 'preload.cjs'), 'utf8');
    expect(requires(preload)).toEqual(['electron']);
    expect(preload).toContain('exposeInMainWorld("counterweight"');
  });

  it('main keeps electron and node packages external', async () => {
    const main = await readFile(path.join(out, 'main.cjs'), 'utf8');
    expect(requires(main)).toContain('electron');
    expect(requires(main).every((name) => name === 'electron' || name.startsWith('node:'))).toBe(true);
  });

  it('the engine-host entry loads DuckDB from node_modules (native addon) and answers the protocol on a parent port', async () => {
    const entry = path.join(out, 'engine-host.cjs');
    expect(requires(await readFile(entry, 'utf8'))).toContain('@duckdb/node-api');
    // Plays Electron's process.parentPort in plain Node: MessageEvent-like arrivals, postMessage replies.
    const shim = `
      const { EventEmitter } = require('node:events');
      const port = new EventEmitter();
      const replies = [];
      port.postMessage = (m) => { replies.push(m); if (m.kind === 'profiled' || m.kind === 'error') { console.log(JSON.stringify(replies)); process.exit(0); } };
      process.parentPort = port;
      require(${JSON.stringify(entry)});
      port.emit('message', { data: { kind: 'ping', id: 1 } });
      port.emit('message', { data: { kind: 'register', id: 2, source: { kind: 'path', paths: [${JSON.stringify(DEMO)}] } } });
      port.emit('message', { data: { kind: 'profile', id: 3, source: '"src_1"' } });
      setTimeout(() => process.exit(3), 20000);
    `;
    const { stdout } = await run(process.execPath, ['-e', shim], { cwd: ROOT, env: { ...process.env, NODE_PATH: path.join(ROOT, 'node_modules') } });
    const replies = JSON.parse(stdout) as { kind: string; id: number; profile?: { $struct: { rows: number } } }[];
    expect(replies[0]).toEqual({ kind: 'pong', id: 1, protocol: 2 });
    expect(replies[1]).toMatchObject({ kind: 'registered', id: 2, source: { relation: '"src_1"' } });
    // The demo log's manifest states its row count.
    expect(replies.at(-1)?.profile?.$struct.rows).toBe(DEMO_ROWS);
  });

  it('packaging names the app and points at the bundled main', () => {
    expect(packaging).toMatchObject({ appId: 'app.counterweight.desktop', productName: 'Counterweight', main: 'dist/electron/main.cjs' });
  });
});
