/** Regrouping the segment map from the cube: rows and minima must equal direct SQL over the log. */
import { afterAll, beforeAll, expect, it } from 'vitest';
import { runAuditDetailed, type AuditResult } from '../../app/core/audit.ts';
import { segmentMap } from '../../app/core/segment-map.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { FIXED_NOW, SAMPLE } from './audit-helpers.ts';

let engine: Engine;
let audit: AuditResult;
let relation = '';

beforeAll(async () => {
  engine = await createNativeEngine();
  const src = await engine.register({ kind: 'path', paths: [`${SAMPLE}maple-row-demo.parquet`] });
  relation = src.relation;
  audit = await runAuditDetailed((q) => engine.query(q), { relation, input: { files: [], format: 'parquet' }, engine: 'native', now: FIXED_NOW });
});
afterAll(async () => engine?.close());

it('groups by one column with the shares, counts and minimum propensities SQL gives', async () => {
  const scans = engine.sourceScans;
  const [shares, minP, , rows] = segmentMap(audit.cells, audit.report.roles.segments, ['device']);
  // the first layer is the exploration layer, as the report's map: each action's share of its group's rows
  expect(shares!.unit).toBe("share of the segment's rows");
  expect(rows!.unit).toBe('rows');
  expect(engine.sourceScans).toBe(scans);
  const t = await engine.query(`SELECT device, promotion, count(*)::DOUBLE AS n, min(propensity) FILTER (WHERE propensity > 0 AND propensity <= 1) AS min_p FROM ${relation} GROUP BY ALL`);
  for (let i = 0; i < t.rowCount; i++) {
    const [d, a, n, m] = t.columns.map((c) => c[i]);
    const r = rows!.y!.indexOf(String(d));
    const c = rows!.x.indexOf(String(a));
    expect(rows!.values[r]![c]).toBe(n);
    expect(minP!.values[r]![c]).toBe(m);
    const total = (rows!.values[r] as number[]).reduce((a, b) => a + b, 0);
    expect(shares!.values[r]![c]).toBe((n as number) / total);
  }
  expect(rows!.y).toEqual(['android', 'ios', 'web']);
});

it('shows the unexplored (old-town, web) group with no other action logged', () => {
  const [shares] = segmentMap(audit.cells, audit.report.roles.segments, ['region', 'device']);
  const r = shares!.y!.indexOf('old-town · web');
  const logged = shares!.x.filter((_, j) => (shares!.values[r]![j] as number) > 0);
  expect(logged).toEqual(['free-delivery']);
  expect(shares!.values[r]![shares!.x.indexOf('free-delivery')]).toBe(1);
  // every other action is never logged there: null with its reason, drawn hatched as on the report's map
  expect(shares!.x.filter((a) => a !== 'free-delivery').map((a) => shares!.null_reasons![r]![shares!.x.indexOf(a)])).toEqual(Array(shares!.x.length - 1).fill('never logged'));
});

it('refuses a column that is not a segment of the audit', () => {
  expect(() => segmentMap(audit.cells, audit.report.roles.segments, ['basket_value'])).toThrow(/not a segment column/);
});

it('keys every row of the map by its segment, and the key selects the rows the cell counts', async () => {
  // the report's map and the regrouped map both open on the exploration layer: each action's share of its segment's rows
  const reportMap = audit.report.checks.flatMap((c) => c.series ?? []).find((s) => s.kind === 'heatmap' && s.unit === "share of the segment's rows");
  const [regrouped] = segmentMap(audit.cells, audit.report.roles.segments, ['device', 'region']);
  for (const series of [reportMap!, regrouped!]) {
    const keys = series.segment_keys!;
    expect(keys.axis).toBe('y');
    expect(keys.segments.length).toBe(series.y!.length);
    // Direct SQL over the log, by the key's columns and values (not by the label): it must count what the cell shows.
    for (const r of [0, Math.floor(series.y!.length / 2), series.y!.length - 1]) {
      const segment = keys.segments[r]!;
      expect(segment.map((p) => p.value).join(' · ')).toBe(series.y![r]);
      const where = segment.map((p) => `CAST("${p.column}" AS VARCHAR) = '${p.value.replace(/'/g, "''")}'`).join(' AND ');
      const t = await engine.query(`SELECT promotion, count(*)::DOUBLE AS n FROM ${relation} WHERE ${where} GROUP BY ALL`);
      const total = (t.columns[1] as number[]).reduce((a, b) => a + b, 0);
      const share = series.unit !== 'rows';
      for (let i = 0; i < t.rowCount; i++) {
        const c = series.x.indexOf(String(t.columns[0]![i]));
        const n = t.columns[1]![i] as number;
        if (c >= 0) expect(series.values[r]![c]).toBe(share ? n / total : n);
      }
    }
  }
  expect(regrouped!.segment_keys!.segments[0]!.map((p) => p.column)).toEqual(['device', 'region']);
});
