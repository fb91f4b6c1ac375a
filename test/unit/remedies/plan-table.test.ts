/** The plan table written by `audit --plan`: CSV cells neutralised against spreadsheet formulas (OWASP, "CSV Injection"). */
import { describe, expect, it } from 'vitest';
import type { Remedies } from '../../../app/core/model/report.ts';
import { planCsv, planJson, PLAN_COLUMNS } from '../../../app/core/remedies/plan-table.ts';
import { parseCsv } from '../../../app/core/targets/csv.ts';

const row = { target: '=HYPERLINK("x")', segment: { region: 'east, ridge' }, rows_per_day: 10, share: 0.1, floor: 0.02, days: 3.5, rows: 35, reachable: true, cost: 0.001, logging_value: 0.2, sd: 0.4, current_floor: null };
const remedies = { reward_range: { min: 0, max: 1, source: 's' }, plan_options: { delta: { '=HYPERLINK("x")': 0.01 }, power: 0.8, alpha: 0.05, days: 30, log_days: 30 }, restricted: [], caps: [], plan: [row], cautions: [] } as unknown as Remedies;

describe('plan table', () => {
  it('writes one CSV row per plan row, a formula-like segment value behind an apostrophe', () => {
    const { header, rows } = parseCsv(planCsv(remedies));
    expect(header).toEqual([...PLAN_COLUMNS]);
    expect(rows).toHaveLength(1);
    // written after an apostrophe (and quoted), read back as it was by the target-table reader
    expect(planCsv(remedies)).toContain(`"'=HYPERLINK(""x"")"`);
    expect(rows[0]![0]).toBe('=HYPERLINK("x")');
    expect(rows[0]![1]).toBe('region=east, ridge');
    expect(rows[0]![9]).toBe('');
  });

  it('writes the same rows as JSON with the options they were planned for, and an empty table without remedies', () => {
    expect(JSON.parse(planJson(remedies)).rows).toEqual([row]);
    expect(JSON.parse(planJson(undefined)).rows).toEqual([]);
    expect(parseCsv(planCsv(undefined)).rows).toEqual([]);
  });
});
