/**
 * The target editor writes its edits back as a policy table and lets the core parse it, so the text must
 * round-trip exactly through app/core/targets/targets.ts parseTable, the parser the headless command uses.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseTable } from '../../app/core/targets/targets.ts';
import { sizeMismatch } from '../../renderer/engine/engine-backend.ts';
import { allOn, editProblems, keyLabel, segmentRow, tableCsv, type TablePolicy } from '../../renderer/state/policy-edit.ts';

const LOG_COLUMNS = ['region', 'device', 'tenure', 'promotion', 'propensity', 'ordered'];
const v9 = parseTable('table:v9.csv', 'v9.csv', readFileSync('sample-data/maple-row-v9-policy.csv', 'utf8'), 'promotion', LOG_COLUMNS) as TablePolicy;
const OLD_TOWN_WEB_NEW = ['old-town', 'web', 'new'].join('\u001f');

describe('policy table edits', () => {
  it('writes an unedited table back as text that parses to the same probabilities, to the last bit', () => {
    const again = parseTable('table:v9.csv', 'v9.csv', tableCsv(v9, new Map(), 'promotion'), 'promotion', LOG_COLUMNS) as TablePolicy;
    expect(again.keyColumns).toEqual(v9.keyColumns);
    expect([...again.probabilities].map(([k, m]) => [k, [...m]])).toEqual([...v9.probabilities].map(([k, m]) => [k, [...m]]));
  });

  it('moves one segment\'s whole mass onto one action and leaves every other segment as it was', () => {
    const edits = new Map([[OLD_TOWN_WEB_NEW, allOn(v9, 'bakery')]]);
    const edited = parseTable('table:v9.csv', 'v9.csv', tableCsv(v9, edits, 'promotion'), 'promotion', LOG_COLUMNS) as TablePolicy;
    expect([...(edited.probabilities.get(OLD_TOWN_WEB_NEW) ?? [])].filter(([, q]) => q > 0)).toEqual([['bakery', 1]]);
    for (const [key, m] of v9.probabilities) if (key !== OLD_TOWN_WEB_NEW) expect([...(edited.probabilities.get(key) ?? [])]).toEqual([...m]);
    expect(segmentRow(v9, edits, OLD_TOWN_WEB_NEW).get('bakery')).toBe(1);
    expect(keyLabel(OLD_TOWN_WEB_NEW)).toBe('old-town · web · new');
  });

  it('names a segment whose probabilities do not sum to 1 or leave [0, 1]', () => {
    const row = new Map(segmentRow(v9, new Map(), OLD_TOWN_WEB_NEW));
    row.set('bakery', (row.get('bakery') ?? 0) + 0.05);
    expect(editProblems(new Map([[OLD_TOWN_WEB_NEW, row]]), v9.keyColumns)).toEqual([expect.stringMatching(/^Segment old-town · web · new: the probabilities sum to 1\.05; they must sum to 1\.$/)]);
    expect(editProblems(new Map([[OLD_TOWN_WEB_NEW, new Map([['bakery', 1.5], ['household', -0.5]])]]), v9.keyColumns)).toEqual([expect.stringContaining('from 0 to 1')]);
    expect(editProblems(new Map([[OLD_TOWN_WEB_NEW, allOn(v9, 'household')]]), v9.keyColumns)).toEqual([]);
  });

  it('quotes key values that hold commas or quotes, as RFC 4180 requires', () => {
    const policy: TablePolicy = { kind: 'table', name: 'table:t', spec: 'table:t.csv', implicit: false, keyColumns: ['region'], actions: ['a'], probabilities: new Map([['north, "harbor"', new Map([['a', 1]])]]) };
    const text = tableCsv(policy, new Map(), 'promotion');
    expect(text).toBe('region,promotion,probability\n"north, ""harbor""",a,1\n');
    expect([...(parseTable('table:t.csv', 't.csv', text, 'promotion', LOG_COLUMNS) as TablePolicy).probabilities.keys()]).toEqual(['north, "harbor"']);
  });
});

describe('a picked file found by name on the host', () => {
  const picked = [{ name: 'log.parquet', size: 1000 } as File];
  it('is accepted only when the host found a file of the same size', () => {
    expect(sizeMismatch(picked, [{ path: '/data/log.parquet', bytes: 1000, sha256: '' }])).toBeNull();
    expect(sizeMismatch(picked, [{ path: '/data/log.parquet', bytes: 999, sha256: '' }])).toMatch(/found a different log\.parquet \(\/data\/log\.parquet, 999 bytes; the picked file has 1,000\)/);
    expect(sizeMismatch(picked, [])).toMatch(/did not report opening log\.parquet/);
  });
});
