/**
 * Engine-side limits: a locked engine (the engine host's) reads only registered logs; DuckDB-Wasm running out of memory
 * says what to use instead; literals with NUL bytes stay inside their quotes.
 */
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runAudit } from '../../app/core/audit.ts';
import { literal } from '../../app/core/sql/quote.ts';
import { expandSource } from '../../app/engine/file-grants.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { quoteLiteral } from '../../app/engine/sql-source.ts';
import { createWasmNodeEngine } from '../../app/engine/wasm-node.ts';
import { FILES } from './outcome.ts';

const out = mkdtempSync(path.join(tmpdir(), 'cw-limits-'));
afterAll(() => rmSync(out, { recursive: true, force: true }));

describe('locked engine (the engine host\'s): queries read only the registered logs', () => {
  it('refuses read_csv of an unregistered file, COPY ... TO, ATTACH and SET, and still reads what was registered', async () => {
    const host = await createNativeEngine({ restrictFileAccess: true, threads: 1 });
    try {
      const src = await host.register({ kind: 'path', paths: [path.join(FILES, 'epoch-seconds.csv')] });
      expect((await host.query(`SELECT count(*)::DOUBLE AS n FROM ${src.relation}`)).columns[0]).toEqual([400]);
      const refused = async (sql: string) => {
        const e = await host.query(sql).then(() => null, (x: unknown) => x as Error & { code?: string });
        expect(e, sql).not.toBeNull();
        expect(e?.message, sql).toMatch(/Refused|locked/);
      };
      await refused(`SELECT * FROM read_csv(${quoteLiteral(path.join(FILES, 'single-row.csv'))})`);
      await refused("SELECT * FROM read_text('/etc/hostname')");
      const leak = path.join(out, 'leak.csv');
      await refused(`COPY (SELECT * FROM ${src.relation}) TO ${quoteLiteral(leak)}`);
      expect(existsSync(leak)).toBe(false);
      await refused(`ATTACH ${quoteLiteral(path.join(out, 'x.duckdb'))}`);
      await refused('SET enable_external_access = true');
      // A second log registered later is readable too; the first one still is.
      const second = await host.register({ kind: 'path', paths: [path.join(FILES, 'mixed-schema', 'part-1.parquet')] });
      expect((await host.query(`SELECT count(*)::DOUBLE AS n FROM ${second.relation}`)).columns[0]).toEqual([200]);
      expect((await host.query(`SELECT count(*)::DOUBLE AS n FROM ${src.relation}`)).columns[0]).toEqual([400]);
      await refused(`SELECT * FROM read_parquet(${quoteLiteral(path.join(FILES, 'mixed-schema', 'part-2.parquet'))})`);
    } finally {
      await host.close();
    }
  });

  it('expands a folder source to its part files, each granted by its own path', () => {
    const folder = path.join(FILES, 'mixed-schema');
    expect(expandSource([folder], 'parquet')).toEqual({ files: [path.join(folder, 'part-1.parquet'), path.join(folder, 'part-2.parquet')], hadFolder: true });
  });

  it('an in-process native engine without the option keeps full access (the headless command reads what it is given)', async () => {
    const engine = await createNativeEngine({ threads: 1 });
    try {
      const t = await engine.query(`SELECT count(*)::DOUBLE AS n FROM read_csv(${quoteLiteral(path.join(FILES, 'epoch-millis.csv'))})`);
      expect(t.columns[0]).toEqual([400]);
    } finally {
      await engine.close();
    }
  });
});

describe('DuckDB-Wasm out of memory', () => {
  it('a query beyond a 16 MB memory limit fails with out-of-memory naming the desktop app and the headless command', async () => {
    const engine = await createWasmNodeEngine();
    try {
      const src = await engine.register({ kind: 'path', paths: [path.join(FILES, 'epoch-seconds.csv')] });
      await engine.query("SET memory_limit = '16MB'");
      const heavy = `SELECT count(*) FROM (SELECT range % 3000000 AS k, list(range) AS l FROM range(6000000) GROUP BY 1)`;
      const error = await engine.query(heavy).then(() => null, (e: unknown) => e as Error & { code?: string });
      expect(error?.code).toBe('out-of-memory');
      expect(error?.message).toMatch(/DuckDB-Wasm\) ran out of memory/);
      expect(error?.message).toMatch(/desktop app/);
      expect(error?.message).toMatch(/counterweight audit/);
      expect(error?.message).not.toMatch(/temp_directory|Possible solution/i);
      // The engine stays usable afterwards, and a small audit still runs once the limit is raised.
      await engine.query("SET memory_limit = '512MB'");
      const report = await runAudit((sql) => engine.query(sql), { relation: src.relation, input: { files: [], format: src.format }, engine: engine.kind });
      expect(report.input.rows).toBe(400);
    } finally {
      await engine.close();
    }
  });
});

describe('literals with a NUL byte', () => {
  it.each([['old\u0000town'], ['\u0000'], ["a'\u0000'b"]])('%j round-trips through DuckDB as one value', async (text) => {
    const engine = await createNativeEngine({ threads: 1 });
    try {
      for (const quote of [literal, quoteLiteral]) {
        const t = await engine.query(`SELECT ${quote(text)} AS v, length(${quote(text)})::DOUBLE AS n`);
        expect(t.columns[0]).toEqual([text]);
        expect(t.columns[1]).toEqual([text.length]);
      }
    } finally {
      await engine.close();
    }
  });
});
