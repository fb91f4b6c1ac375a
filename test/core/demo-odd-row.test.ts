/**
 * One harmless odd row must not switch a check off: the demo log with one extra row of the mis-logged action
 * at a propensity below the floor (p = 0.005) appended, in a temporary copy, still shows the planted
 * balance.weights defect where the generator's manifest (sample-data/maple-row-demo.manifest.json) says it was
 * planted. The row goes once into the defect's own region and version, once elsewhere. The committed log is
 * read, never written (its SHA-256 is checked).
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Report } from '../../app/core/model/report.ts';
import { quoteLiteral } from '../../app/engine/sql-source.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { auditFile, SAMPLE, v9Target } from './audit-helpers.ts';
import { matchingFindings, readManifest } from './manifest.ts';

const DEMO = `${SAMPLE}maple-row-demo.parquet`;
const manifest = readManifest(`${SAMPLE}maple-row-demo.manifest.json`);
const defect = manifest.defects.find((d) => d.kind === 'balance.weights')!;
const sha = (file: string) => createHash('sha256').update(readFileSync(file)).digest('hex');

/** where the odd row goes: the planted region under v8, and a region the defect does not touch */
const PLACES = [
  { name: 'inside the defect (riverside, v8)', region: 'riverside', version: 'v8', at: '2026-03-20 10:00:00' },
  { name: 'elsewhere (north-harbor, v7)', region: 'north-harbor', version: 'v7', at: '2026-03-05 10:00:00' },
] as const;

let dir: string;
let engine: Engine;
let before: string;
const reports = new Map<string, Report>();

beforeAll(async () => {
  before = sha(DEMO);
  dir = mkdtempSync(join(tmpdir(), 'cw-odd-row-'));
  const instance = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
  const c = await instance.connect();
  engine = await createNativeEngine();
  for (const place of PLACES) {
    const file = join(dir, `${place.region}.parquet`);
    await c.run(`COPY (SELECT * FROM read_parquet(${quoteLiteral(DEMO)}) UNION ALL
      SELECT 'odd-row-1', TIMESTAMP '${place.at}', '${place.region}', 'ios', 'loyal', 'recipe-kit', 0.005, 0, NULL, '${place.version}') TO ${quoteLiteral(file)} (FORMAT parquet)`);
    reports.set(place.name, await auditFile(engine, file, { targets: [v9Target()] }));
  }
  c.closeSync();
  instance.closeSync();
}, 300_000);
afterAll(async () => {
  await engine?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

describe('the demo log with one odd below-floor row appended', () => {
  it.each(PLACES.map((p) => p.name))('still fails balance.weights with the planted defect located (%s)', (name) => {
    const report = reports.get(name)!;
    const check = report.checks.find((c) => c.id === 'balance.weights')!;
    expect(check.status).toBe('fail');
    expect(matchingFindings(report, defect).filter((f) => f.status === 'fail'), defect.description).not.toHaveLength(0);
    // the odd row's own segment is set aside from recipe-kit's tests, and said so
    const aside = check.findings.find((f) => f.status === 'warn' && f.action === 'recipe-kit');
    expect(aside?.message).toMatch(new RegExp(`region=${name.includes('riverside') ? 'riverside' : 'north-harbor'}, device=ios, tenure=loyal`));
    expect(report.verdict).toBe('not-supported');
  });

  it('left the committed demo log unchanged', () => {
    expect(sha(DEMO)).toBe(before);
  });
});
