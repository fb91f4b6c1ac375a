import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import Ajv from 'ajv';
import { describe, expect, it } from 'vitest';
import { GENERATED_SCHEMAS, schemaText } from '../../../app/core/model/json-schema.ts';
import { CHECK_IDS, REPORT_KEYS } from '../../../app/core/model/report.ts';
import { parseReport, REPORT_SCHEMA_PATH, toJsonValue, validateReport } from '../../../app/report/json.ts';
import { fixtureReport } from './fixture-report.ts';

const committed = (file: string) => readFileSync(fileURLToPath(new URL(`../../../app/core/model/${file}`, import.meta.url)), 'utf8');

describe('the report contract has one source', () => {
  it.each(GENERATED_SCHEMAS.map((g) => [g.file, g] as const))('%s is what the zod contract generates (run `npm run schemas` after changing it)', (file, g) => {
    expect(committed(file)).toBe(schemaText(g.schema()));
  });

  it('the published schema (checked by an independent validator, ajv) and the zod contract agree on good and broken reports', () => {
    const ajv = new Ajv({ allErrors: true, strict: false });
    ajv.addFormat('date-time', /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?(Z|[+-]\d{2}:\d{2})$/);
    const published = ajv.compile(JSON.parse(readFileSync(REPORT_SCHEMA_PATH, 'utf8')) as object);
    const good = toJsonValue(fixtureReport()) as Record<string, unknown>;
    const cases: [string, Record<string, unknown>][] = [
      ['the fixture', good],
      ['a hostile fixture', toJsonValue(fixtureReport({ hostile: true }))],
      ['an unknown top-level key', { ...good, extra: 1 }],
      ['an unknown verdict', { ...good, verdict: 'maybe' }],
      ['a check missing', { ...good, checks: (good.checks as unknown[]).slice(1) }],
      ['a negative row count', { ...good, input: { ...(good.input as object), rows: -1 } }],
      ['a malformed digest', { ...good, signoff: { reviewer: 'R', decision: 'approve', note: '', signed_at: 'x', digest: 'zz' } }],
    ];
    for (const [name, value] of cases) {
      expect([name, published(value)]).toEqual([name, validateReport(value).ok]);
    }
    expect(validateReport(good).ok).toBe(true);
  });

  it('the schema enum of check ids and the key order come from the contract', () => {
    const schema = JSON.parse(readFileSync(REPORT_SCHEMA_PATH, 'utf8')) as { definitions: { checkId: { enum: string[] } }; required: string[]; properties: Record<string, unknown> };
    expect(schema.definitions.checkId.enum).toEqual([...CHECK_IDS]);
    expect(Object.keys(schema.properties)).toEqual([...REPORT_KEYS]);
    // within /1 a new top-level key is optional (README, "The report contract")
    expect(schema.required).toEqual(REPORT_KEYS.filter((k) => k !== 'remedies'));
  });

  it('a reader names what is wrong, and names a later contract version as such', () => {
    expect(() => parseReport({ ...fixtureReport(), verdict: 'maybe' }, 'week.json')).toThrow(/week\.json is not a valid counterweight\.report\/1 report: \/verdict/);
    expect(() => parseReport({ ...fixtureReport(), schema: 'counterweight.report/2' }, 'next.json')).toThrow(/\/schema is "counterweight\.report\/2"; this version of Counterweight reads counterweight\.report\/1/);
    expect(() => parseReport([], 'list.json')).toThrow(/not an object/);
    const report = fixtureReport();
    expect(parseReport(report)).toBe(report);
  });
});
