/** SQL predicates over the source that select the rows behind a finding. */
import { DIALECTS } from '../sql/dialects.ts';
import { OTHER_LABEL, type RowExpressions, type TimeBuckets } from '../scan/expressions.ts';

export { finiteReward, validPropensity } from '../scan/expressions.ts';

/** Every dialect's always-true condition: parts of a conjunction that select nothing away. */
const TRUTHS = new Set(Object.values(DIALECTS).map((d) => d.truth));

/** null when a value is the capped "(other)" bucket, which no simple predicate selects. */
export function segmentPredicate(rows: RowExpressions, columns: readonly string[], segment: Record<string, string>): string | null {
  const parts: string[] = [];
  for (const [c, v] of Object.entries(segment)) {
    const i = columns.indexOf(c);
    if (i < 0 || v === OTHER_LABEL) return null;
    parts.push(`${rows.segments[i]} = ${rows.dialect.literal(v)}`);
  }
  return parts.length ? parts.join(' AND ') : rows.dialect.truth;
}

export function windowPredicate(rows: RowExpressions, buckets: TimeBuckets | null, first: number, lastInclusive: number): string | null {
  if (!buckets || !rows.timeUs) return null;
  const lo = buckets.originUs + first * buckets.widthUs;
  const hi = buckets.originUs + (lastInclusive + 1) * buckets.widthUs;
  const [from, to] = [rows.dialect.timestamp(lo), rows.dialect.timestamp(hi)];
  if (rows.timeColumn && from && to) return `${rows.timeColumn} >= ${from} AND ${rows.timeColumn} < ${to}`;
  return `${rows.timeUs} >= ${lo} AND ${rows.timeUs} < ${hi}`;
}

export function and(...parts: (string | null | undefined)[]): string | undefined {
  if (parts.some((p) => p === null)) return undefined;
  const kept = parts.filter((p): p is string => !!p && !TRUTHS.has(p));
  return kept.length ? kept.map((p) => `(${p})`).join(' AND ') : TRUTHS.values().next().value as string;
}
