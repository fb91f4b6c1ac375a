/** `npm run bench` options for the warehouse row (bench/run.ts, bench/clickhouse.ts). */
import { describe, expect, it } from 'vitest';
import { parseOptions, plan } from '../../bench/run.ts';

describe('the warehouse row of npm run bench', () => {
  it('is measured by default at 10m rows, at the size asked for, and not in the smoke run', () => {
    expect(parseOptions([]).clickhouse).toBe('10m');
    expect(parseOptions(['--clickhouse-size', '100m']).clickhouse).toBe('100m');
    expect(parseOptions(['--smoke']).clickhouse).toBeNull();
    expect(parseOptions(['--engines', 'native']).clickhouse).toBeNull();
  });
  it('alone (--engines clickhouse) plans no other measurement', () => {
    const o = parseOptions(['--engines', 'clickhouse', '--clickhouse-size', '1m']);
    expect(o.engines).toEqual([]);
    expect(plan(o)).toEqual([]);
    expect(o.clickhouse).toBe('1m');
  });
  it('refuses a size it has no log for', () => {
    expect(() => parseOptions(['--clickhouse-size', '7m'])).toThrow(/--clickhouse-size takes 1m, 10m, 30m, 100m, got "7m"/);
    expect(() => parseOptions(['--engines', 'oracle'])).toThrow(/--engines takes .*clickhouse, got "oracle"/);
  });
});
