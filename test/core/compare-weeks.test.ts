/**
 * Comparing the demo log's audit with the week after it. Outside reference: the generator's manifest of what it
 * changed between the two logs (sample-data/maple-row-next.manifest.json, `changes_since`), which the generator
 * writes from its own plan, not from the audit.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { anyChange, compareReports } from '../../app/core/compare/compare.ts';
import type { Comparison } from '../../app/core/compare/contract.ts';
import type { Report } from '../../app/core/model/report.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { validateComparison } from '../../app/report/comparison-json.ts';
import { fingerprintFiles } from '../../app/report/fingerprint.ts';
import type { PlantedChange, SampleManifest } from '../../sample-data/manifest.ts';
import { auditFile, SAMPLE, v9Target } from './audit-helpers.ts';

let engine: Engine;
let demo: Report;
let next: Report;
let comparison: Comparison;
const manifest = JSON.parse(readFileSync(`${SAMPLE}maple-row-next.manifest.json`, 'utf8')) as SampleManifest;
const changes = manifest.changes_since!;

async function audit(file: string): Promise<Report> {
  const path = `${SAMPLE}${file}`;
  return auditFile(engine, path, { targets: [v9Target()], input: { files: await fingerprintFiles([path], '/'), format: 'parquet' } });
}

beforeAll(async () => {
  engine = await createNativeEngine();
  demo = await audit('maple-row-demo.parquet');
  next = await audit('maple-row-next.parquet');
  comparison = compareReports(demo, next);
});
afterAll(async () => engine?.close());

const contains = (segment: Record<string, string>, part: Record<string, string>) => Object.entries(part).every(([k, v]) => segment[k] === v);

/** Whether a headline of the comparison is the planted change (by the manifest's checks and places). */
function explains(change: PlantedChange, h: Comparison['worse'][number]): boolean {
  if (h.kind === 'check') return change.checks.includes(h.check!);
  const check = h.kind === 'segment' ? 'segments' : h.check;
  return change.where.some((w) => w.checks.includes(check ?? '') && contains(h.segment ?? {}, w.segment) && (w.action === undefined || h.action === w.action));
}

describe('the demo log against the week after it', () => {
  it('the comparison meets its contract and states no obstacle to comparing', () => {
    expect(validateComparison(comparison).errors).toEqual([]);
    expect(comparison.issues).toEqual([]);
    expect(comparison.comparable).toBe(true);
  });

  it.each(changes.worse.map((c) => [c.description.slice(0, 60), c] as const))('reports the planted change as a regression: %s', (_name, change) => {
    expect(comparison.worse.filter((h) => h.regression && explains(change, h))).not.toHaveLength(0);
  });

  it('reports nothing else as a regression', () => {
    const unexplained = comparison.worse.filter((h) => h.regression && !changes.worse.some((c) => explains(c, h)));
    expect(unexplained.map((h) => h.message)).toEqual([]);
    expect(comparison.regression).toBe(true);
  });

  it.each(changes.better.map((c) => [c.description.slice(0, 60), c] as const))('reports the planted improvement as better or resolved: %s', (_name, change) => {
    expect(comparison.better.filter((h) => explains(change, h))).not.toHaveLength(0);
  });

  it('keeps the persisting defects as persisting findings', () => {
    const persisting = (check: string, segment: Record<string, string>) => comparison.findings.filter((f) => f.state === 'persisting' && f.check === check && contains(f.segment, segment));
    expect(persisting('propensity.exploration', { region: 'old-town', device: 'web' })).toHaveLength(1);
    expect(persisting('identity.duplicates', {})).toHaveLength(1);
    expect(persisting('reward.validity', {})).toHaveLength(1);
    expect(persisting('support.floor', { tenure: 'new' }).length).toBeGreaterThan(0);
    // Size then and now: the duplicated rows each manifest says it planted.
    const planted = (m: SampleManifest) => m.defects.find((d) => d.kind === 'identity.duplicates')!.rows_affected;
    const dup = persisting('identity.duplicates', {})[0]!;
    expect(dup.size_metric).toBe('extra_rows');
    expect(dup.baseline!.size).toBe(planted(JSON.parse(readFileSync(`${SAMPLE}maple-row-demo.manifest.json`, 'utf8')) as SampleManifest));
    expect(dup.current!.size).toBe(planted(manifest));
  });

  it('a report compared with itself shows no change at all', () => {
    const self = compareReports(next, next);
    expect(self.worse).toEqual([]);
    expect(self.better).toEqual([]);
    expect(self.regression).toBe(false);
    expect(anyChange(self)).toBe(false);
    expect(self.issues.map((i) => i.kind)).toEqual(['same-log']);
  });

  it('says first when the settings or targets differ', () => {
    const other = { ...next, settings: { ...next.settings, 'support.floor.epsilon': { ...next.settings['support.floor.epsilon']!, value: 0.02 } }, targets: next.targets.slice(0, 0) };
    const c = compareReports(demo, other);
    expect(c.comparable).toBe(false);
    expect(c.issues.map((i) => i.kind)).toEqual(expect.arrayContaining(['settings', 'targets']));
  });
});
