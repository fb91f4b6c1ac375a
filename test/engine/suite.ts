/**
 * The one engine test suite, run on every engine (native, engine host, DuckDB-Wasm for Node). Same SQL,
 * same fixtures, same expected values from cases.ts; formats an engine cannot read are skipped with the
 * reason printed, and for those the suite checks that registering fails fast with a plain message.
 */
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EngineError } from '../../app/engine/types.ts';
import type { Engine, SourceFormat } from '../../app/engine/types.ts';
import { ENGINE_CASES, rowsOf } from './cases.ts';
import { FIXTURE_NAMES, writeFixtures } from './fixtures.ts';
import type { Fixtures } from './fixtures.ts';

export interface SuiteOptions {
  /** Formats the engine reads; the others must fail fast with 'extension-unavailable'. */
  formats: readonly SourceFormat[];
  /** Whether cancelling a running query is part of the engine's contract here. */
  cancellable?: boolean;
  /** Why a format is unreadable, printed beside each skipped case. */
  unreadableReason?: string;
}

const LONG_QUERY = 'SELECT sum(range) FROM range(10000000000)';
const DEMO_CSV = fileURLToPath(new URL('../../sample-data/maple-row-demo.csv', import.meta.url));
const DEMO_MANIFEST = fileURLToPath(new URL('../../sample-data/maple-row-demo.manifest.json', import.meta.url));

async function rejection(promise: Promise<unknown>): Promise<EngineError> {
  try {
    await promise;
  } catch (error) {
    expect(error).toBeInstanceOf(EngineError);
    return error as EngineError;
  }
  throw new Error('expected the call to fail');
}

export function engineSuite(name: string, factory: () => Promise<Engine>, options: SuiteOptions): void {
  describe(`engine suite: ${name}`, () => {
    let engine: Engine;
    let fixtures: Fixtures;

    beforeAll(async () => {
      fixtures = await writeFixtures();
      engine = await factory();
    });
    afterAll(async () => {
      await engine?.close();
      fixtures?.remove();
    });

    for (const fixture of FIXTURE_NAMES) {
      describe(`fixture ${fixture}`, () => {
        for (const c of ENGINE_CASES) {
          it(c.name, async (ctx) => {
            if (!options.formats.includes(fixtures.formatOf(fixture))) {
              const reason = `${name} cannot read ${fixture}: ${options.unreadableReason ?? 'format not supported'}`;
              console.warn(`skipped: ${reason}`);
              ctx.skip(reason);
            }
            const source = await engine.register(fixtures.spec(fixture));
            const table = await engine.query(c.sql(source.relation));
            expect(table.names).toEqual(c.names);
            expect(table.types).toEqual(c.types);
            expect(rowsOf(table)).toEqual(c.rows);
          });
        }
        it('registering lists the files behind the source', async (ctx) => {
          if (!options.formats.includes(fixtures.formatOf(fixture))) ctx.skip('format not readable on this engine');
          const source = await engine.register(fixtures.spec(fixture));
          expect(source.format).toBe(fixtures.formatOf(fixture));
          // The hive folder holds one part per region value of FIXTURE_SELECT (north, south).
          expect(source.files.length).toBe(fixture === 'parquet-hive-folder' ? 2 : 1);
          expect(source.relation).toMatch(/^"src_\d+"$/);
        });
      });
    }

    for (const format of ['parquet', 'ndjson'] as const) {
      it(`registering ${format} where it cannot be read fails fast with a plain message`, async (ctx) => {
        if (options.formats.includes(format)) ctx.skip(`${name} reads ${format}`);
        const started = performance.now();
        const error = await rejection(engine.register(fixtures.spec(format)));
        const elapsed = performance.now() - started;
        expect(error.code).toBe('extension-unavailable');
        expect(error.message).toMatch(/desktop app/);
        expect(error.message).toMatch(/native engine/);
        expect(error.message).toMatch(/headless command/);
        // "Fail fast": well under the 5 s bound; a hang would hit the test time-out instead.
        expect(elapsed).toBeLessThan(2000);
      });
    }

    it('counts queries that read a registered source as scans', async () => {
      const source = await engine.register(fixtures.spec('csv'));
      const before = engine.sourceScans;
      await engine.query('SELECT 42 AS answer');
      expect(engine.sourceScans).toBe(before);
      await engine.query(`SELECT count(*) FROM ${source.relation}`);
      await engine.query(`SELECT min(id) FROM ${source.relation} WHERE id > 1`);
      expect(engine.sourceScans).toBe(before + 2);
    });

    it('a missing file gives an io error naming the file', async () => {
      const missing = `${fixtures.dir}/no-such-log.csv`;
      const error = await rejection(engine.register({ kind: 'path', paths: [missing] }));
      expect(error.code).toBe('io');
      expect(error.message).toContain('no-such-log.csv');
      expect(error.message).not.toMatch(/LINE 1/);
    });

    it('invalid SQL gives a sql error', async () => {
      const error = await rejection(engine.query('SELEC 1'));
      expect(error.code).toBe('sql');
      expect(error.message).toMatch(/syntax error/i);
    });

    it('an unknown relation gives a sql error', async () => {
      const error = await rejection(engine.query('SELECT * FROM "src_999"'));
      expect(error.code).toBe('sql');
    });

    it('a name with no known extension gives unsupported-format', async () => {
      const error = await rejection(engine.register({ kind: 'path', paths: [`${fixtures.dir}/log.xlsx`] }));
      expect(error.code).toBe('unsupported-format');
      expect(error.message).toContain('log.xlsx');
    });

    it('cancel() stops a long query promptly with code cancelled', async (ctx) => {
      if (!options.cancellable) ctx.skip(`${name}: cancel is not part of this engine's contract`);
      const pending = engine.query(LONG_QUERY);
      await new Promise((resolve) => setTimeout(resolve, 300));
      const started = performance.now();
      await engine.cancel();
      const error = await rejection(pending);
      expect(error.code).toBe('cancelled');
      expect(performance.now() - started).toBeLessThan(3000);
      // The engine stays usable after a cancel.
      expect(rowsOf(await engine.query('SELECT 1::INTEGER AS one'))).toEqual([[1]]);
    });

    it('an AbortSignal cancels a long query', async (ctx) => {
      if (!options.cancellable) ctx.skip(`${name}: cancel is not part of this engine's contract`);
      const controller = new AbortController();
      const pending = engine.query(LONG_QUERY, { signal: controller.signal });
      setTimeout(() => controller.abort(), 300);
      const error = await rejection(pending);
      expect(error.code).toBe('cancelled');
    });

    it('demo log: the same aggregate over maple-row-demo.csv', async (ctx) => {
      if (!existsSync(DEMO_CSV) || !existsSync(DEMO_MANIFEST)) ctx.skip('sample-data/maple-row-demo.csv has not been generated');
      const manifest = JSON.parse(readFileSync(DEMO_MANIFEST, 'utf8')) as { generator: { rows: number }; policy_versions: { version: string }[] };
      const source = await engine.register({ kind: 'path', paths: [DEMO_CSV] });
      const table = await engine.query(`SELECT policy_version, count(*)::BIGINT AS n, count(DISTINCT promotion)::INTEGER AS promotions,
        round(sum(propensity::DOUBLE), 3) AS propensity_sum FROM ${source.relation} GROUP BY ALL ORDER BY policy_version`);
      const rows = rowsOf(table);
      // The manifest written beside the demo log states its row count and policy versions.
      expect(rows.map((r) => r[0])).toEqual(manifest.policy_versions.map((p) => p.version));
      expect(rows.reduce((sum, r) => sum + (r[1] as bigint), 0n)).toBe(BigInt(manifest.generator.rows));
      DEMO_ANSWERS.set(name, rows);
      // Every engine that ran so far in this worker answered the same.
      for (const other of DEMO_ANSWERS.values()) expect(other).toEqual(rows);
    });
  });
}

const DEMO_ANSWERS = new Map<string, unknown[][]>();
