import { defineCheck, type CheckDefinition } from './define.ts';
import { bucketWindow, isoUs, pct, result, skipped, timeText, type AuditContext, type DraftFinding } from './context.ts';
import { runs } from './locate.ts';
import { counted } from '../count-words.ts';

/** time.coverage: timestamps parse; span; empty buckets (gaps); timestamps in the future. */
function checkTimeCoverage(ctx: AuditContext): ReturnType<typeof result> {
  const { buckets, roles } = ctx;
  if (!roles.time) return skipped('time.coverage', 'no time column mapped');
  if (!buckets) return skipped('time.coverage', `time column '${roles.time}' has no parseable timestamps`);
  // Rows per bucket come from the cube; without it every bucket would look empty.
  if (!ctx.rows) return skipped('time.coverage', 'the propensity, action or reward role is missing');
  const perBucket = new Array<number>(buckets.count).fill(0);
  let unparsed = 0;
  for (const c of ctx.cells) {
    if (c.bucket < 0 || c.bucket >= buckets.count) unparsed += c.n;
    else perBucket[c.bucket] = (perBucket[c.bucket] ?? 0) + c.n;
  }
  const rows = Math.max(1, ctx.profile.rows);
  const empty = perBucket.map((n, b) => (n === 0 ? b : -1)).filter((b) => b >= 0);
  const gaps = runs(empty);
  const endUs = buckets.originUs + buckets.count * buckets.widthUs;
  const tcol = ctx.profile.columns.find((c) => c.name === roles.time);
  const factor = roles.timeEncoding === 'epoch_s' ? 1e6 : roles.timeEncoding === 'epoch_ms' ? 1e3 : 1;
  const maxUs = roles.timeEncoding === 'timestamp' || roles.timeEncoding === 'text' ? tcol?.maxTimeUs ?? null : tcol?.max != null ? tcol.max * factor : null;
  const minUs = roles.timeEncoding === 'timestamp' || roles.timeEncoding === 'text' ? tcol?.minTimeUs ?? null : tcol?.min != null ? tcol.min * factor : null;
  const future = maxUs !== null && maxUs > ctx.nowUs;
  const futureBuckets = perBucket.map((n, b) => (n > 0 && buckets.originUs + b * buckets.widthUs > ctx.nowUs ? n : 0)).reduce((s, n) => s + n, 0);
  const findings: DraftFinding[] = gaps.map(([a, b]) => ({
    segment: {},
    window: bucketWindow(buckets, a, b + 1),
    status: 'warn' as const,
    metrics: { empty_buckets: b - a + 1 },
    message: `no rows from ${timeText(buckets.originUs + a * buckets.widthUs)} to ${timeText(buckets.originUs + (b + 1) * buckets.widthUs)} UTC (${plural(b - a + 1, 'empty bucket')} of ${durationWords(buckets.widthUs)})`,
  }));
  if (future) findings.push({ segment: {}, status: 'warn', metrics: { latest: isoUs(maxUs as number), rows_in_future_buckets: futureBuckets }, message: `the latest timestamp ${timeText(maxUs as number)} UTC is after the audit started` });
  if (unparsed > 0) findings.push({ segment: {}, status: 'warn', metrics: { rows: unparsed, share: unparsed / rows }, message: `${unparsed.toLocaleString('en')} rows (${pct(unparsed / rows, 2)}) have a missing or unparseable time` });
  const status = findings.length ? 'warn' : 'pass';
  const spanDays = minUs !== null && maxUs !== null ? (maxUs - minUs) / 86_400e6 : null;
  const summary = `${minUs !== null ? timeText(minUs) : '?'} to ${maxUs !== null ? timeText(maxUs) : '?'} UTC (${spanDays !== null ? spanDays.toFixed(1) : '?'} days) in ${counted(buckets.count, 'bucket')} of ${durationWords(buckets.widthUs)} each; ${empty.length === 0 ? 'no empty buckets' : plural(empty.length, 'empty bucket')}${future ? '; timestamps in the future' : ''}${unparsed ? `; ${pct(unparsed / rows, 2)} without a time` : ''}. Row order is not checked.`;
  return result(
    'time.coverage',
    status,
    summary,
    { start: minUs !== null ? isoUs(minUs) : null, end: maxUs !== null ? isoUs(maxUs) : null, span_days: spanDays, bucket: buckets.label, buckets: buckets.count, empty_buckets: empty.length, rows_without_time: unparsed, future: future, bucket_end: isoUs(endUs) },
    findings,
    ['time.bucket', 'time.max_buckets'],
    [{ name: 'rows per bucket', kind: 'bars', x: perBucket.map((_, b) => isoUs(buckets.originUs + b * buckets.widthUs)), values: [perBucket], labels: ['rows'], unit: 'rows' }],
  );
}

export const timeCoverage: CheckDefinition<'time.coverage'> = defineCheck('time.coverage', {
  title: 'Time coverage', blocking: false, panel: 'drift', remedies: ['plan'],
  settings: ['time.bucket', 'time.max_buckets'],
}, checkTimeCoverage);

/** A bucket width in words: "1 day", "6 hours", "90 seconds" (the largest whole unit). */
export function durationWords(us: number): string {
  const units: [number, string][] = [[7 * 86_400e6, 'week'], [86_400e6, 'day'], [3_600e6, 'hour'], [60e6, 'minute'], [1e6, 'second']];
  const [size, unit] = units.find(([u]) => us >= u && us % u === 0) ?? [1e6, 'second'];
  const n = Math.round((us / size) * 100) / 100;
  return `${n.toLocaleString('en')} ${unit}${n === 1 ? '' : 's'}`;
}

/** "1 empty bucket", "4 empty buckets". */
function plural(n: number, noun: string): string {
  return counted(n, noun, `${noun}s`, 'digit');
}
