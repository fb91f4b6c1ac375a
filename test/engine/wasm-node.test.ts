import { createServer } from 'node:http';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EngineError } from '../../app/engine/types.ts';
import { createWasmNodeEngine } from '../../app/engine/wasm-node.ts';
import { rowsOf } from './cases.ts';
import { writeFixtures } from './fixtures.ts';
import type { Fixtures } from './fixtures.ts';
import { engineSuite } from './suite.ts';

engineSuite('wasm-node', () => createWasmNodeEngine(), {
  formats: ['csv', 'parquet'],
  cancellable: true,
  unreadableReason: 'DuckDB-Wasm 1.32 does not build the json extension in, and extension downloads are off',
});

describe('wasm-node: NDJSON behind an extension repository', () => {
  let fixtures: Fixtures;
  let server: Server;
  let silentUrl: string;
  let missingUrl: string;
  beforeAll(async () => {
    fixtures = await writeFixtures();
    // One server that never answers (a stalled repository) and one that answers 404 (no such build).
    server = createServer((request, response) => {
      if (request.url?.startsWith('/missing/')) { response.statusCode = 404; response.end(); }
    });
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    const { port } = server.address() as AddressInfo;
    silentUrl = `http://127.0.0.1:${port}/silent`;
    missingUrl = `http://127.0.0.1:${port}/missing`;
  });
  afterAll(async () => {
    server.closeAllConnections();
    await new Promise((resolve) => server.close(resolve));
    fixtures.remove();
  });

  it('a stalled repository is given up after the time-out, with the plain message', async () => {
    const engine = await createWasmNodeEngine({ extensionRepository: silentUrl, extensionTimeoutMs: 500 });
    const started = performance.now();
    const error = await engine.register(fixtures.spec('ndjson')).catch((e: unknown) => e as EngineError);
    const elapsed = performance.now() - started;
    expect(error).toBeInstanceOf(EngineError);
    expect((error as EngineError).code).toBe('extension-unavailable');
    expect((error as EngineError).message).toMatch(/desktop app.*native engine.*headless command/s);
    expect((error as EngineError).message).toMatch(/within 500 ms/);
    expect(elapsed).toBeGreaterThanOrEqual(450);
    expect(elapsed).toBeLessThan(3000);
    // The engine is still usable for CSV.
    const csv = await engine.register(fixtures.spec('csv'));
    expect(rowsOf(await engine.query(`SELECT count(*)::INTEGER FROM ${csv.relation}`))).toEqual([[4]]);
    await engine.close();
  });

  it('a repository without the extension fails fast', async () => {
    const engine = await createWasmNodeEngine({ extensionRepository: missingUrl, extensionTimeoutMs: 5000 });
    const started = performance.now();
    const error = await engine.register(fixtures.spec('ndjson')).catch((e: unknown) => e as EngineError);
    expect((error as EngineError).code).toBe('extension-unavailable');
    expect((error as EngineError).message).toMatch(/answered 404/);
    expect(performance.now() - started).toBeLessThan(2000);
    await engine.close();
  });
});
