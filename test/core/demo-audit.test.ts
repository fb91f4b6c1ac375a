/**
 * The audit on the demo and clean logs. Outside reference: the generator's manifest of planted
 * defects (sample-data/maple-row-demo.manifest.json), which the generator derives from its own
 * seeded draws, not from the audit; and the JSON Schema of the report contract.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Report } from '../../app/core/model/report.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { validateReport } from '../../app/report/json.ts';
import { describeSegment } from '../../app/core/checks/context.ts';
import { readinessCauses } from '../../app/core/verdict.ts';
import { auditFile, SAMPLE, v9Target } from './audit-helpers.ts';
import { matchingFindings, readManifest } from './manifest.ts';

let engine: Engine;
let demo: Report;
let demoDefault: Report;
let clean: Report;
let demoScans = 0;

beforeAll(async () => {
  engine = await createNativeEngine();
  const before = engine.sourceScans;
  demo = await auditFile(engine, `${SAMPLE}maple-row-demo.parquet`, { targets: [v9Target()] });
  demoScans = engine.sourceScans - before;
  demoDefault = await auditFile(engine, `${SAMPLE}maple-row-demo.parquet`);
  clean = await auditFile(engine, `${SAMPLE}maple-row-clean.parquet`, { targets: [v9Target()] });
});
afterAll(async () => engine?.close());

describe('demo log', () => {
  const manifest = readManifest(`${SAMPLE}maple-row-demo.manifest.json`);

  it('is not supported', () => {
    expect(demo.verdict).toBe('not-supported');
    expect(demoDefault.verdict).toBe('not-supported');
  });

  it.each(manifest.defects.map((d) => [d.kind, d] as const))('reports the planted %s defect where it was planted', (_kind, defect) => {
    const found = matchingFindings(demo, defect);
    expect(found, `${defect.kind} at ${JSON.stringify(defect.segment)} ${defect.action ?? ''} ${JSON.stringify(defect.window ?? {})}: ${defect.description}`).not.toHaveLength(0);
  });

  it('marks the planted policy-version switch on the drift charts over time, at the manifest\'s switch time', () => {
    const at = (JSON.parse(readFileSync(`${SAMPLE}maple-row-demo.manifest.json`, 'utf8')) as { policy_switch_at: string }).policy_switch_at;
    const overTime = demo.checks.filter((c) => c.id === 'drift.policy' || c.id === 'drift.reward').flatMap((c) => c.series ?? []);
    expect(overTime.length).toBeGreaterThan(0);
    for (const s of overTime) expect(s.marks?.map((m) => [String(m.x).slice(0, 10), m.kind, m.label])).toEqual([[at.slice(0, 10), 'policy-switch', 'v7 → v8']]);
  });

  it('the exploration map notes exactly the rows of the segment planted without exploration, and its shares sum to 1 per row', () => {
    const planted = manifest.defects.find((d) => d.kind === 'propensity.exploration')!;
    const map = demo.checks.find((c) => c.id === 'propensity.exploration')?.series?.[0];
    const keys = map?.segment_keys?.segments ?? [];
    expect(keys.length).toBeGreaterThan(0);
    const inPlanted = keys.map((parts) => Object.entries(planted.segment).every(([k, v]) => parts.some((p) => p.column === k && p.value === v)));
    expect(map?.row_notes?.map((n) => n === 'not explored')).toEqual(inPlanted);
    for (const row of map?.values ?? []) expect(row.reduce<number>((s, v) => s + (v ?? 0), 0)).toBeCloseTo(1, 12);
  });

  it('counts planted duplicates and invalid propensities exactly', () => {
    const dup = manifest.defects.find((d) => d.kind === 'identity.duplicates')!;
    const range = manifest.defects.find((d) => d.kind === 'propensity.range')!;
    expect(demo.checks.find((c) => c.id === 'identity.duplicates')!.metrics.extra_rows).toBe(dup.magnitude.extra_rows);
    expect(demo.checks.find((c) => c.id === 'propensity.range')!.metrics.invalid_rows).toBe(range.rows_affected);
  });

  it('attaches example rows and re-runnable SQL to findings', async () => {
    const f = demo.checks.find((c) => c.id === 'propensity.range')!.findings[0]!;
    expect(f.examples?.length).toBeGreaterThan(0);
    expect(f.examples!.every((r) => r.device === 'android' && (r.propensity === null || r.propensity === 0))).toBe(true);
    // the SQL calls the log `log`, as the report tells its reader to name it
    expect(f.sql).toMatch(/^SELECT \* FROM log WHERE /);
    await engine.query(`CREATE OR REPLACE VIEW log AS SELECT * FROM read_parquet('${SAMPLE}maple-row-demo.parquet')`);
    const rows = await engine.query(`SELECT count(*)::DOUBLE AS n FROM (${f.sql})`);
    expect(rows.columns[0]![0]).toBe(f.metrics.invalid_rows);
  });

  it('scans the source at most 5 times plus once per target and once more per given target (the rows above its weight caps), and its first rows twice (the profile, and the role evidence when the action is not mapped)', () => {
    expect(demo.run.source_scans).toBe(demoScans);
    expect(demoScans).toBeLessThanOrEqual(5 + 1 + demo.targets.length + (demo.remedies?.caps.length ?? 0));
    expect(demo.queries.filter((q) => q.name.startsWith('clip ')).map((q) => q.name)).toEqual(['clip table:maple-row-v9-policy']);
    expect(demo.queries.filter((q) => q.scans_source && /\bLIMIT 100000\)/.test(q.sql)).map((q) => q.name)).toEqual(['profile (first rows)', 'role evidence']);
  });

  it('reports uniform and every always:<action> target when none is given', () => {
    expect(demoDefault.targets.map((t) => t.name)).toEqual(['uniform', ...['bakery', 'free-delivery', 'household', 'no-banner', 'pantry-restock', 'produce-box', 'recipe-kit'].map((a) => `always:${a}`)]);
  });
});

describe('clean log', () => {
  it('is supported with no failing or warning check', () => {
    expect(clean.checks.filter((c) => c.status === 'fail' || c.status === 'warn').map((c) => `${c.id}: ${c.summary}`)).toEqual([]);
    expect(clean.verdict).toBe('supported');
    expect(clean.checks.find((c) => c.id === 'balance.weights')!.metrics.failing).toBe(0);
  });

  it('the doubly robust, SNIPS and IPS intervals of the v9 target overlap', () => {
    const t = clean.targets[0]!;
    expect(t.ips.ci_low!).toBeLessThan(t.snips.ci_high!);
    expect(t.dr.ci_low!).toBeLessThan(t.snips.ci_high!);
    expect(t.snips.ci_low!).toBeLessThan(t.dr.ci_high!);
  });
});

describe('report contract', () => {
  it.each([['demo', () => demo], ['demo, default targets', () => demoDefault], ['clean', () => clean]] as const)('the %s report validates against the JSON Schema', (_n, get) => {
    const v = validateReport(get());
    expect(v.errors).toEqual([]);
    expect(v.ok).toBe(true);
  });

  it('keeps the SQL of every query it ran', () => {
    expect(demo.queries.map((q) => q.name)).toEqual(expect.arrayContaining(['describe', 'profile', 'cube', 'duplicates', 'examples']));
  });
});

describe('demo log: findings and readiness point at the planted causes', () => {
  const manifest = readManifest(`${SAMPLE}maple-row-demo.manifest.json`);
  const planted = (kind: string) => manifest.defects.find((d) => d.kind === kind)!;
  const within = (segment: Record<string, string>, scope: Record<string, string>) => Object.entries(scope).every(([k, v]) => segment[k] === v);

  it('the weight-balance headline is the planted segment value × action under its version, over the planted window', () => {
    const defect = planted('balance.weights');
    const first = demo.checks.find((c) => c.id === 'balance.weights')!.findings[0]!;
    expect(first.segment).toEqual(defect.segment);
    expect(first.window).toEqual(defect.window);
    expect(first.metrics.scope).toBe('policy version');
    // the action the manifest lists furthest from balance
    const worst = Object.entries(defect.magnitude.balance_by_action as Record<string, number>).sort((a, b) => Math.abs(b[1] - 1) - Math.abs(a[1] - 1))[0]![0];
    expect(first.action).toBe(worst);
  });

  it('every segment that is not ready says why, and each planted cause counts exactly the segments it was planted in', () => {
    for (const s of demo.segments) expect(s.causes === undefined, `${describeSegment(s.segment)} ${s.status}`).toBe(s.status === 'pass');
    const causes = readinessCauses(demo.segments);
    for (const kind of ['propensity.exploration', 'balance.weights', 'drift.reward']) {
      const scope = planted(kind).segment;
      const cause = causes.filter((c) => c.cause.endsWith(` in ${describeSegment(scope)}`));
      expect(cause, kind).toHaveLength(1);
      expect(cause[0]!.segments, kind).toBe(demo.segments.filter((s) => within(s.segment, scope)).length);
    }
    // the below-floor propensity: one cause, in segments of the planted tenure only
    const floor = planted('support.floor');
    const low = causes.filter((c) => c.cause.startsWith('a propensity below'));
    expect(low.map((c) => c.cause)).toEqual([`a propensity below ε = 0.01 (${floor.action} in ${describeSegment(floor.segment)})`]);
    expect(low[0]!.segments).toBe(demo.segments.filter((s) => s.min_propensity !== null && s.min_propensity < 0.01 && within(s.segment, floor.segment)).length);
    expect(causes).toHaveLength(4);
  });
});

describe('demo log remedies', () => {
  const manifest = readManifest(`${SAMPLE}maple-row-demo.manifest.json`);
  const exploration = manifest.defects.find((d) => d.kind === 'propensity.exploration')!;
  const floor = manifest.defects.find((d) => d.kind === 'support.floor')!;
  const balance = manifest.defects.find((d) => d.kind === 'balance.weights')!;
  const actions = Object.keys(balance.magnitude.balance_by_action as Record<string, number>);
  const key = (segment: Record<string, string>, action: string) => `${segment.region}|${segment.device}|${segment.tenure}|${action}`;
  const within = (segment: Record<string, string>, planted: Record<string, string>) => Object.entries(planted).every(([k, v]) => segment[k] === v);

  it('restricts the estimate to exactly the explored pairs: the manifest\'s greedy segment (every action but the one it always shows) and its below-floor pair are out, nothing else', () => {
    const restricted = demo.remedies!.restricted[0]!;
    expect(restricted.excluded_count).toBe(restricted.excluded.length);
    const excluded = new Set(restricted.excluded.map((c) => key(c.segment, c.action)));
    const expected = new Set<string>();
    for (const s of demo.segments) {
      for (const a of actions) {
        if ((within(s.segment, exploration.segment) && a !== exploration.action) || (within(s.segment, floor.segment) && a === floor.action)) expected.add(key(s.segment, a));
      }
    }
    expect(expected.size).toBeGreaterThan(20);
    expect([...excluded].sort()).toEqual([...expected].sort());
    expect(restricted.mass_inside).toBeGreaterThan(0);
    expect(restricted.mass_inside).toBeLessThan(1 - demo.targets[0]!.support_deficit + 1e-12);
    expect(restricted.estimate.ci_low).not.toBeNull();
    expect(restricted.not_covered).toMatch(/outside the region/);
  });

  it.each(manifest.defects.map((d) => [d.kind, d] as const))('links the planted %s defect\'s findings and reasons to a remedy', (_kind, defect) => {
    const found = matchingFindings(demo, defect);
    expect(found.length).toBeGreaterThan(0);
    for (const f of found) expect(f.remedies?.length, f.message).toBeGreaterThan(0);
    for (const id of [defect.kind, ...defect.also_detected_by]) {
      const reason = demo.reasons.find((r) => r.check === id);
      if (reason) expect(reason.remedies?.length, reason.message).toBeGreaterThan(0);
    }
    const remedyKeys = Object.keys(demo.remedies!);
    for (const f of found) for (const k of f.remedies!) expect(remedyKeys).toContain(k);
  });

  it('caps the weights on a grid up to the largest weight, where the cap clips nothing and equals IPS', () => {
    const caps = demo.remedies!.caps[0]!;
    expect(caps.list.length).toBeGreaterThan(3);
    const last = caps.list[caps.list.length - 1]!;
    expect(last.bias_bound).toBe(0);
    expect(last.estimate.value).toBeCloseTo(demo.targets[0]!.ips.value!, 12);
    for (const c of caps.list) expect(c.cap).toBeGreaterThanOrEqual(caps.exact_above);
    expect(caps.best!.mse_bound).toBeLessThanOrEqual(Math.min(...caps.list.map((c) => c.mse_bound)));
  });

  it('plans the next log for every segment of the target and for the whole log', () => {
    const plan = demo.remedies!.plan;
    expect(plan.filter((r) => Object.keys(r.segment).length === 0)).toHaveLength(1);
    expect(plan.length).toBe(1 + demo.segments.length);
    // the greedy segment cannot reach any precision without exploring
    const greedy = plan.filter((r) => within(r.segment, exploration.segment));
    expect(greedy.every((r) => r.share > 0)).toBe(true);
  });
});
