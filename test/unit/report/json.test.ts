import { existsSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { REPORT_KEY_ORDER, REPORT_SCHEMA_PATH, serializeReport, validateReport } from '../../../app/report/json.ts';
import { fixtureReport } from './fixture-report.ts';

describe('report JSON', () => {
  it('writes top-level keys in model order whatever the object\'s order', () => {
    const r = fixtureReport();
    const shuffled = Object.fromEntries(Object.entries(r).reverse());
    // the fixture has no optional `remedies`; the others keep model order around it
    expect(Object.keys(JSON.parse(serializeReport(shuffled)))).toEqual(REPORT_KEY_ORDER.filter((k) => k in r));
    const withRemedies = { ...Object.fromEntries(Object.entries(r).reverse()), remedies: { restricted: [] } };
    expect(Object.keys(JSON.parse(serializeReport(withRemedies as unknown as typeof r)))).toEqual([...REPORT_KEY_ORDER]);
  });

  it('never writes NaN or Infinity, and keeps big integers exact', () => {
    const r = { ...fixtureReport(), extra: { a: Number.NaN, b: Number.POSITIVE_INFINITY, c: 2n ** 60n, d: 5n } };
    const text = serializeReport(r);
    expect(text).not.toMatch(/NaN|Infinity/);
    expect(JSON.parse(text).extra).toEqual({ a: null, b: null, c: '1152921504606846976', d: 5 });
  });

  it.skipIf(!existsSync(REPORT_SCHEMA_PATH))('validates the fixture against the published schema, and rejects a broken one', () => {
    const good = validateReport(fixtureReport());
    expect(good.errors).toEqual([]);
    const bad = validateReport({ ...fixtureReport(), verdict: 'maybe' });
    expect(bad.ok).toBe(false);
    expect(bad.errors.join('\n')).toMatch(/verdict/);
  });
});
