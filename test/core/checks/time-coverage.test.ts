/**
 * time.coverage from hand-written rows: empty daily buckets are gaps, a timestamp after the audit started and rows
 * without a time each warn, and a log without a time column skips. The builder's log starts 2026-01-01T00:00Z with
 * daily buckets (test/core/checks/build.ts); every date below is ISO 8601 calendar arithmetic done by hand.
 */
import { describe, expect, it } from 'vitest';
import { timeCoverage } from '../../../app/core/checks/time-coverage.ts';
import { contextOf, type Rows } from './build.ts';

/** 100 rows of each of two actions in every day of `days` but the `empty` ones; bucket -1 holds `untimed` rows. */
function log(days: number, empty: readonly number[] = [], untimed = 0): Rows[] {
  const rows: Rows[] = [];
  for (let b = 0; b < days; b++) if (!empty.includes(b)) for (const action of ['a', 'b']) rows.push({ action, bucket: b, p: 0.5, count: 100 });
  if (untimed) rows.push({ action: 'a', bucket: -1, p: 0.5, count: untimed });
  return rows;
}

describe('time.coverage', () => {
  it('passes when every day has rows', () => {
    const r = timeCoverage.run(contextOf(log(10), { days: 10 }));
    expect(r.status).toBe('pass');
    expect(r.findings).toHaveLength(0);
    expect(r.metrics).toMatchObject({ buckets: 10, empty_buckets: 0, rows_without_time: 0, future: false, start: '2026-01-01T00:00:00.000Z', bucket_end: '2026-01-11T00:00:00.000Z' });
  });

  it('names each run of empty days as one gap with its window (days 4-6 and day 9 of 10: two findings)', () => {
    // buckets 3, 4, 5 are 2026-01-04 up to 2026-01-07; bucket 8 is 2026-01-09 up to 2026-01-10
    const r = timeCoverage.run(contextOf(log(10, [3, 4, 5, 8]), { days: 10 }));
    expect(r.status).toBe('warn');
    expect(r.metrics.empty_buckets).toBe(4);
    expect(r.findings.map((f) => [f.window, f.metrics.empty_buckets])).toStrictEqual([
      [{ from: '2026-01-04T00:00:00.000Z', to: '2026-01-07T00:00:00.000Z' }, 3],
      [{ from: '2026-01-09T00:00:00.000Z', to: '2026-01-10T00:00:00.000Z' }, 1],
    ]);
    expect(r.summary).toContain('4 empty buckets');
    // times for people, to the minute, UTC said once (the windows keep full ISO text for programs)
    expect(r.findings[0]?.message).toBe('no rows from 2026-01-04 00:00 to 2026-01-07 00:00 UTC (3 empty buckets of 1 day)');
    expect(r.summary).toMatch(/^2026-01-01 00:00 to 2026-01-10 \d\d:\d\d UTC \(/);
  });

  it('warns on rows without a time, with their share (50 of 2,050 rows = 2.44%, by hand)', () => {
    const r = timeCoverage.run(contextOf(log(10, [], 50), { days: 10 }));
    expect(r.status).toBe('warn');
    expect(r.metrics.rows_without_time).toBe(50);
    const f = r.findings.find((x) => x.metrics.rows === 50);
    expect(f?.metrics.share).toBeCloseTo(50 / 2050, 15);
    expect(f?.message).toContain('2.44%');
  });

  it('warns when the latest timestamp is after the audit started', () => {
    // the audit "started" at 2026-01-07T00:00Z, the start of bucket 6; the rows counted are those of buckets that start
    // strictly after it: buckets 7, 8 and 9 (2026-01-08 to 01-10), 3 × 200 rows
    const ctx = { ...contextOf(log(10), { days: 10 }), nowUs: Date.UTC(2026, 0, 7) * 1000 };
    const r = timeCoverage.run(ctx);
    expect(r.status).toBe('warn');
    expect(r.metrics.future).toBe(true);
    expect(r.findings.find((f) => 'rows_in_future_buckets' in f.metrics)?.metrics.rows_in_future_buckets).toBe(600);
  });

  it('skips a log without a time column', () => {
    const r = timeCoverage.run(contextOf(log(1)));
    expect(r.status).toBe('skipped');
    expect(r.summary).toBe('Skipped: no time column mapped.');
  });
});
