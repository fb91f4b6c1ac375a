/**
 * The corpus of broken and hostile logs (test/corpus/) through the audit core on both engines: each gives
 * its expected error or finding, never a crash or a hang, and no input file changes.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAudit } from '../../app/core/audit.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { createWasmNodeEngine } from '../../app/engine/wasm-node.ts';
import type { Engine } from '../../app/engine/types.ts';
import { fingerprintFiles } from '../../app/report/fingerprint.ts';
import { validateReport, toJsonValue } from '../../app/report/json.ts';
import { CASES, HIGH_CARDINALITY, WASM_EXTENSION_UNAVAILABLE, type CorpusCase, type Outcome } from '../corpus/cases.ts';
import { writeHighCardinalitySegmentLog } from '../corpus/make-corpus.ts';
import { expectOutcome, FILES, hashCorpus, type Attempt } from './outcome.ts';

const FIXED_NOW = () => Date.parse('2026-06-01T00:00:00Z');

async function attempt(engine: Engine, file: string, roles: CorpusCase['roles']): Promise<Attempt> {
  try {
    const src = await engine.register({ kind: 'path', paths: [file] });
    const files = await fingerprintFiles(src.files, process.cwd());
    const report = await runAudit((sql) => engine.query(sql), { relation: src.relation, input: { files, format: src.format }, scanSql: src.scanSql, engine: engine.kind, now: FIXED_NOW, ...(roles ? { roles } : {}) });
    return { report };
  } catch (error) {
    return { error: error as Error & { code?: string } };
  }
}

const before = hashCorpus();

const ENGINES: [string, () => Promise<Engine>][] = [
  ['native', () => createNativeEngine({ threads: 2 })],
  ['wasm-node', () => createWasmNodeEngine()],
];

describe.each(ENGINES)('corpus on %s', (kind, make) => {
  let engine: Engine;
  beforeAll(async () => { engine = await make(); });
  afterAll(async () => { await engine.close(); });

  it.each(CASES.map((c) => [c.id, c] as const))('%s', async (_id, c) => {
    const outcome: Outcome = kind === 'native' || !c.wasm || c.wasm === 'same' ? c.expect
      : c.wasm === 'extension-unavailable' ? WASM_EXTENSION_UNAVAILABLE : c.wasm;
    const started = Date.now();
    const result = await attempt(engine, path.join(FILES, c.file), c.roles);
    expectOutcome(result, outcome);
    if (result.report) expect(validateReport(toJsonValue(result.report)).errors).toEqual([]);
    // Wasm refuses Parquet/NDJSON before touching the file, not after a time-out.
    if (kind === 'wasm-node' && c.wasm === 'extension-unavailable') expect(Date.now() - started).toBeLessThan(1000);
  });
});

describe('a segment column with 10^6 distinct values', () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'cw-hc-'));
  const file = path.join(dir, 'one-segment-value-per-row.csv');
  beforeAll(async () => { await writeHighCardinalitySegmentLog(file); }, 60_000);
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('is capped at 50 values plus "(other)", and the cap is in report.roles.caps (native)', async () => {
    const engine = await createNativeEngine({ threads: 2 });
    try {
      const r = await attempt(engine, file, HIGH_CARDINALITY.roles);
      if (r.error) throw r.error;
      const cap = r.report.roles.caps.shopper;
      expect(cap?.kept).toBe(HIGH_CARDINALITY.cap);
      // counted exactly by the cube before capping: the generator writes one value per row
      expect(cap?.distinct).toBe(1_000_000);
      const values = new Set(r.report.segments.map((s) => s.segment.shopper));
      expect(values.has('(other)')).toBe(true);
      expect(values.size).toBeLessThanOrEqual(HIGH_CARDINALITY.cap + 1);
      expect(r.report.input.rows).toBe(1_000_000);
    } finally {
      await engine.close();
    }
  }, 60_000);
});

describe('inputs are never modified', () => {
  it('every corpus file hashes the same after both engines audited it', () => {
    // Runs last in this file (Vitest keeps declaration order within a file).
    expect(hashCorpus()).toEqual(before);
  });
});
