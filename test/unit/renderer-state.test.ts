import { describe, expect, it } from 'vitest';
import { nextStatus, IDLE, type EngineStatus, type OpenedSource } from '../../renderer/engine/status.ts';
import { chooseFormat } from '../../renderer/engine/source-files.ts';
import { shortTime } from '../../renderer/charts.ts';
import { bucketsNeedHour, formatValue, isInstant, loggedValueText, metricText, timeText, withTimesInWords } from '../../renderer/format.ts';
import { countText, counted } from '../../app/core/count-words.ts';
import { settingValueText } from '../../app/charts/labels.ts';
import { heatCellText } from '../../app/charts/index.ts';
import { detectMode } from '../../renderer/engine/mode.ts';
import { EMPTY_DRAFT, roleProblems, targetProblems } from '../../renderer/state/draft.ts';
import type { ColumnProfile, Profile } from '../../app/core/scan/profile.ts';
import { loadRecent, rememberAudit } from '../../renderer/state/recent.ts';
import type { Report } from '../../app/core/model/report.ts';
import { historyOf, reportsOfTexts, withReports } from '../../renderer/state/history.ts';
import { fixtureReport } from './report/fixture-report.ts';
import { serializeReport } from '../../app/report/serialize.ts';

const source = { label: 'log.csv', relation: '"src_1"', scanSql: '', format: 'csv', files: [], profile: { rows: 3, columns: [] }, suggestions: [] } as OpenedSource;

describe('engine status value', () => {
  it('walks open -> run -> progress -> done and keeps the source', () => {
    let s: EngineStatus = nextStatus(IDLE, { type: 'opened', source });
    s = nextStatus(s, { type: 'started' });
    expect(s).toMatchObject({ kind: 'running', stage: 'profile', finished: [] });
    s = nextStatus(s, { type: 'progress', stage: 'profile', done: true });
    s = nextStatus(s, { type: 'progress', stage: 'cube' });
    expect(s).toMatchObject({ kind: 'running', stage: 'cube', finished: ['profile'] });
    const report = { verdict: 'supported' } as Report;
    s = nextStatus(s, { type: 'finished', report });
    expect(s).toEqual({ kind: 'done', report, source });
  });

  it('returns to ready with the same source when a run is cancelled', () => {
    const running = nextStatus(nextStatus(IDLE, { type: 'opened', source }), { type: 'started' });
    expect(nextStatus(running, { type: 'cancelled' })).toEqual({ kind: 'ready', source });
  });

  it('does not start a run without an opened source', () => {
    expect(nextStatus(IDLE, { type: 'started' })).toBe(IDLE);
  });

  it('ignores progress that arrives after the run ended', () => {
    const ready = nextStatus(IDLE, { type: 'opened', source });
    expect(nextStatus(ready, { type: 'progress', stage: 'tails' })).toBe(ready);
  });
});

describe('choosing a log format from file names', () => {
  it.each([
    [['a.csv', 'b.CSV'], { format: 'csv' }],
    [['part-0.tsv'], { format: 'csv', csv: { delimiter: '\t', header: true } }],
    [['x.ndjson', 'y.jsonl'], { format: 'ndjson' }],
    [['log.parquet'], { format: 'parquet' }],
  ])('%j', (names, expected) => {
    expect(chooseFormat(names)).toMatchObject(expected);
  });

  it.each([
    [[], /at least one/],
    [['notes.txt'], /cannot tell the format of notes\.txt/],
    [['a.csv', 'b.parquet'], /share one format; b\.parquet/],
    [['a.csv', 'b.tsv'], /share one format; b\.tsv/],
  ])('refuses %j with a reason', (names, message) => {
    const result = chooseFormat(names);
    expect('error' in result && result.error).toMatch(message);
  });
});

describe('page mode', () => {
  it.each([
    ['', false, 'web'],
    ['#host=ws://127.0.0.1:5178/engine&token=abc', false, 'hosted'],
    ['#host=http://evil&token=abc', false, 'web'],
    ['#host=ws://127.0.0.1:5178/engine', false, 'web'],
    ['#host=ws://127.0.0.1:5178/engine&token=abc', true, 'desktop'],
  ])('fragment %s (bridge %s) is %s', (fragment, bridge, kind) => {
    expect(detectMode(fragment, bridge).kind).toBe(kind);
  });
});

describe('target list problems', () => {
  it('names duplicates, an empty always target and a table without contents', () => {
    const problems = targetProblems([{ spec: 'uniform' }, { spec: 'uniform' }, { spec: 'always:' }, { spec: 'table:v9.csv' }]);
    expect(problems).toEqual([
      'The target uniform is listed twice.',
      'An "always" target needs an action.',
      'The table target table:v9.csv has no file contents.',
    ]);
  });
  it('refuses an always target whose action the log does not hold, listing the actions', () => {
    const actions = { values: ['arm-a', 'arm-b'], complete: true };
    expect(targetProblems([{ spec: 'always:arm-a' }], actions)).toEqual([]);
    expect(targetProblems([{ spec: 'always:arm-c' }], actions)).toEqual(['The log has no action “arm-c”; its actions are “arm-a”, “arm-b”. Remove the target or choose another action.']);
    // a list read from the first rows only cannot refuse: the audit decides over the whole log
    expect(targetProblems([{ spec: 'always:arm-c' }], { ...actions, complete: false })).toEqual([]);
  });
});

class MemoryStorage {
  private items = new Map<string, string>();
  constructor(private readonly quota = Infinity) {}
  get length() { return this.items.size; }
  clear() { this.items.clear(); }
  getItem(k: string) { return this.items.get(k) ?? null; }
  key(i: number) { return [...this.items.keys()][i] ?? null; }
  removeItem(k: string) { this.items.delete(k); }
  setItem(k: string, v: string) { if (v.length > this.quota) throw new Error('QuotaExceededError'); this.items.set(k, v); }
}

describe('recent audits', () => {
  const report = (at: string, big = 0) => ({ verdict: 'not-supported', run: { started_at: at }, input: { rows: 10 }, pad: 'x'.repeat(big) }) as unknown as Report;

  it('lists newest first without duplicates', () => {
    const storage = new MemoryStorage() as unknown as Storage;
    rememberAudit('a.csv', report('2026-01-01T00:00:00Z'), storage);
    rememberAudit('b.csv', report('2026-01-02T00:00:00Z'), storage);
    rememberAudit('a.csv', report('2026-01-01T00:00:00Z'), storage);
    expect(loadRecent(storage).map((r) => r.label)).toEqual(['a.csv', 'b.csv']);
  });

  it('drops stored reports of older entries instead of failing when the quota is reached', () => {
    const storage = new MemoryStorage(30_000) as unknown as Storage;
    rememberAudit('a.csv', report('2026-01-01T00:00:00Z', 20_000), storage);
    const list = rememberAudit('b.csv', report('2026-01-02T00:00:00Z', 20_000), storage);
    expect(list.map((r) => [r.label, r.report !== undefined])).toEqual([['b.csv', true], ['a.csv', false]]);
    expect(loadRecent(storage)).toHaveLength(2);
  });

  it('keeps an entry but drops its stored report when the report does not meet the contract', () => {
    const storage = new MemoryStorage() as unknown as Storage;
    rememberAudit('a.csv', report('2026-01-01T00:00:00Z'), storage);
    expect(loadRecent(storage).map((r) => [r.label, r.report !== undefined])).toEqual([['a.csv', false]]);
  });

  it('survives a corrupted entry', () => {
    const storage = new MemoryStorage() as unknown as Storage;
    storage.setItem('counterweight.recent-audits', '{not json');
    expect(loadRecent(storage)).toEqual([]);
  });
});

describe('time bucket labels on page charts', () => {
  it.each([
    ['2026-03-02T00:00:00.000Z', '2 Mar'],
    ['2026-03-02T06:00:00.000Z', '2 Mar 06:00'],
    ['2026-12-31T23:00:00.000Z', '31 Dec 23:00'],
    ['bakery', 'bakery'],
  ])('%s -> %s', (label, expected) => {
    expect(shortTime(label)).toBe(expected);
  });
  it('keeps the hour on every label of a chart whose buckets are shorter than a day, midnight included', () => {
    expect(shortTime('2026-03-02T00:00:00.000Z', bucketsNeedHour(['2026-03-01T18:00:00.000Z', '2026-03-02T00:00:00.000Z']))).toBe('2 Mar 00:00');
  });
  it('writes the report\'s instants in text for people, UTC said once', () => {
    expect(withTimesInWords('from 2026-03-01T00:00:00.000Z to 2026-03-14T23:59:19.680Z (14.0 days)')).toBe('from 2026-03-01 00:00 to 2026-03-14 23:59 UTC (14.0 days)');
    expect(withTimesInWords('mean reward 0.1 → 0.2 from 2026-03-12T06:00:00.000Z (p = 0.01)')).toBe('mean reward 0.1 → 0.2 from 2026-03-12 06:00 UTC (p = 0.01)');
    expect(timeText('2026-03-15T00:00:00.000Z')).toBe('2026-03-15 00:00');
    expect(isInstant('2026-03-15T00:00:00.000Z')).toBe(true);
    expect(isInstant('upgrade')).toBe(false);
  });

  it('shows a logged row as it was logged: no rounding or digit grouping, timestamps to the second', () => {
    // an example row of the demo's identity.duplicates finding, as the native engine hands it over
    expect(loggedValueText('2026-03-02T00:21:28.000000Z')).toBe('2026-03-02 00:21:28');
    expect(loggedValueText('2026-03-02T00:21:28.250000Z')).toBe('2026-03-02 00:21:28.25');
    expect(loggedValueText(0.3265053)).toBe('0.3265053');
    expect(loggedValueText(1234)).toBe('1234');
    expect(loggedValueText(12345678901234567890n)).toBe('12345678901234567890');
    expect(loggedValueText(null)).toBe('null');
    expect(loggedValueText('d-00000019')).toBe('d-00000019');
    expect(loggedValueText('2026-03-02 00:21')).toBe('2026-03-02 00:21');
  });
});

describe('role mapping problems', () => {
  const col = (name: string, type: string, kind: ColumnProfile['kind'], extra: Partial<ColumnProfile> = {}): ColumnProfile => ({
    name, type, kind, nonNull: 100, distinct: 5, distinctBasis: 'all rows', distinctRows: 100, min: null, max: null, nan: 0, infinite: 0, nonBinary: 0, nonInteger: 0,
    parsedAsNumber: 0, parsedAsTime: 0, minTimeUs: null, maxTimeUs: null, ...extra,
  });
  const profile: Profile = {
    rows: 100,
    columns: [
      col('promotion', 'VARCHAR', 'text'),
      col('propensity', 'DOUBLE', 'numeric', { min: 0.1, max: 0.9, nonBinary: 100, nonInteger: 100, distinct: 40 }),
      col('ordered', 'INTEGER', 'numeric', { min: 0, max: 1, distinct: 2 }),
      col('policy_version', 'VARCHAR', 'text', { distinct: 2 }),
    ],
  };
  const roles = { action: 'promotion', propensity: 'propensity', reward: 'ordered' };

  it('asks for each missing required role in words', () => {
    const problems = roleProblems({ ...EMPTY_DRAFT, roles: { action: 'promotion' } }, profile);
    expect(problems.map((p) => p.message)).toEqual([
      'Choose a column for propensity: the audit cannot run without it.',
      'Choose a column for reward: the audit cannot run without it.',
    ]);
  });

  it('refuses one column in two roles', () => {
    const problems = roleProblems({ ...EMPTY_DRAFT, roles: { ...roles, policy_version: 'promotion' } }, profile);
    expect(problems.map((p) => p.message)).toContain('Column "promotion" is used for action and policy version; each column can play one role.');
  });

  it('warns when "none" cannot switch off a role the core will still fill from its suggestion', () => {
    const problems = roleProblems({ ...EMPTY_DRAFT, roles }, profile);
    expect(problems).toContainEqual({ severity: 'warn', message: 'Policy version is set to none, but the audit will still use the suggested column "policy_version".' });
  });
});

describe('audit history sources', () => {
  const report = fixtureReport();
  it('keeps the readable reports, names each file that is not one, and lets a picked-again file replace its earlier copy', () => {
    const read = reportsOfTexts([{ name: 'week1.json', text: serializeReport(report) }, { name: 'notes.json', text: '{"schema":"counterweight.report/1"}' }, { name: 'broken.json', text: '{' }]);
    expect(read.reports.map((r) => r.label)).toEqual(['week1.json']);
    expect(read.problems).toEqual([expect.stringMatching(/^notes\.json is not a valid counterweight\.report\/1 report/), expect.stringMatching(/^broken\.json is not JSON/)]);
    const again = { label: 'week1.json', report: { ...report, verdict: 'supported' as const } };
    expect(withReports([...read.reports, { label: 'week2.json', report }], [again]).map((r) => [r.label, r.report.verdict])).toEqual([['week2.json', report.verdict], ['week1.json', 'supported']]);
    expect(historyOf([])).toBeNull();
  });
});

describe('the words of the screens: counts, shares, settings, map cells', () => {
  it('counts with a thousands separator and nouns by count (CLDR en grouping; English plurals)', () => {
    expect(countText(30_000)).toBe('30,000');
    expect(countText(10_030_000n)).toBe('10,030,000');
    expect(formatValue(30_000)).toBe(countText(30_000));
    expect([0, 1, 2].map((n) => counted(n, 'place'))).toEqual(['no places', '1 place', '2 places']);
    expect(counted(0, 'warning', 'warnings', 'digit')).toBe('0 warnings');
  });

  it('a share metric reads as a percent, as the rest of the app shows shares; other metrics as numbers', () => {
    expect(metricText('extra_share', 0.01573)).toBe('1.57%');
    expect(metricText('share_below_floor', 0)).toBe('0%');
    expect(metricText('uniform.ess_fraction', 0.074)).toBe('7.4%');
    expect(metricText('extra_rows', 472)).toBe('472');
    expect(metricText('start', '2026-03-01T00:00:00.000Z')).toBe('2026-03-01 00:00');
    expect(metricText('version_switches', 'rules-a→rules-b@2026-03-08T00:00:00.000Z')).toBe('rules-a→rules-b@2026-03-08 00:00 UTC');
  });

  it('a setting reads with its unit: shares in percent, others after the number (app/core/settings.ts)', () => {
    expect(settingValueText('identity.duplicates.fail_share', 0.01)).toBe('1%');
    expect(settingValueText('propensity.range.fail_share', 0.001)).toBe('0.1%');
    expect(settingValueText('propensity.exploration.top_action_share', 0.99)).toBe('99%');
    expect(settingValueText('balance.max_bias_se', 0.5)).toBe('0.5 SE');
    expect(settingValueText('support.floor.epsilon', 0.01)).toBe('0.01');
    expect(settingValueText('time.bucket', 'auto')).toBe('auto');
    expect(settingValueText('remedies.max_listed', 10_000)).toBe('10,000 pairs');
  });

  it('a map cell in the table view prints what the chart prints', () => {
    // the chart's label formatter is the one exported (app/charts/heatmap.ts): two decimals, small values to 2 digits
    expect(heatCellText(0.07492)).toBe('0.07');
    expect(heatCellText(0.0088)).toBe('0.0088');
    expect(heatCellText(-2.314)).toBe('-2.31');
    expect(heatCellText(null)).toBe('');
    // counts read as everywhere else in the app (app/core/count-words.ts), in the chart, the table and the panel alike
    expect(heatCellText(4851)).toBe('4,851');
    expect(heatCellText(12)).toBe('12');
  });
});
