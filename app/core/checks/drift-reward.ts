import { defineCheck, type CheckDefinition } from './define.ts';
import { wilsonInterval } from '../stats/wilson.ts';
import type { CubeCell } from '../cube/types.ts';
import type { Series } from '../model/report.ts';
import { oneWayAnova } from '../stats/anova.ts';
import { benjaminiHochberg } from '../stats/bh.ts';
import { bestChangePoint, type ChangePoint } from '../stats/changepoint.ts';
import { chiSquareHomogeneity } from '../stats/chisq.ts';
import { cmhGeneralAssociation } from '../stats/cmh.ts';
import type { GroupMoments } from '../stats/moments.ts';
import { normalQuantile } from '../stats/distributions.ts';
import { bucketWindow, describeSegment, fmt, isoUs, notListed, pct, result, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { and, finiteReward, segmentPredicate, windowPredicate } from './predicates.ts';
import { rewardKind } from './reward-validity.ts';
import { switchMarks, versionSwitches } from './drift-policy.ts';
import { countText as n_ } from '../count-words.ts';

const MIN_BUCKET_ROWS = 10;
/** The homogeneity test runs on at most this many equal windows of buckets: daily cells of a small
 * segment hold too few events for a many-bucket chi-square to have power (common practice). */
const TEST_WINDOWS = 8;

/** Merges consecutive buckets into at most `k` windows of (nearly) equal bucket count. */
function coarsen(buckets: readonly GroupMoments[], k: number): GroupMoments[] {
  const size = Math.max(1, Math.ceil(buckets.length / k));
  const out: GroupMoments[] = [];
  for (let i = 0; i < buckets.length; i += size) {
    const part = buckets.slice(i, i + size);
    out.push({ n: part.reduce((s, m) => s + m.n, 0), sum: part.reduce((s, m) => s + m.sum, 0), sumSq: part.reduce((s, m) => s + m.sumSq, 0) });
  }
  return out;
}
const MAX_FINDINGS = 25;
const MAX_SERIES = 6;
const Z95 = normalQuantile(0.975);

export interface RewardDriftTest {
  readonly segment: Record<string, string>;
  /** '*' for the test pooled over actions, stratified by action */
  readonly action: string;
  readonly buckets: readonly GroupMoments[];
  readonly p: number;
  readonly change: ChangePoint | null;
}

/** Reward moments of one bucket; `centred` holds the same over d = r − shift (the cube's centred sums), for variances. */
type Moments = { n: number; sum: number; sumSq: number; centred: { n: number; sum: number; sumSq: number } };
type RewardGroup = { segment: Record<string, string>; action: string; buckets: Moments[] };

/** Per (all rows | one segment value) × action: reward moments per time bucket, groups in first-seen order. */
function groupsOf(ctx: AuditContext): RewardGroup[] {
  const b = ctx.buckets!;
  const cols = ctx.segmentColumns;
  const out = new Map<string, RewardGroup>();
  const open = (key: string, segment: () => Record<string, string>, action: string): RewardGroup => {
    let g = out.get(key);
    if (!g) out.set(key, (g = { segment: segment(), action, buckets: Array.from({ length: b.count }, () => ({ n: 0, sum: 0, sumSq: 0, centred: { n: 0, sum: 0, sumSq: 0 } })) }));
    return g;
  };
  // the group of each (column, value, action) is looked up by its key once, then by small integer ids
  const actionIds = new Map<string, number>();
  const valueIds = cols.map(() => new Map<string, number>());
  const all: RewardGroup[] = [];
  const byValue: RewardGroup[][][] = cols.map(() => []);
  const idOf = (m: Map<string, number>, v: string) => {
    let id = m.get(v);
    if (id === undefined) m.set(v, (id = m.size));
    return id;
  };
  const add = (g: RewardGroup, c: CubeCell) => {
    const m = g.buckets[c.bucket]!;
    m.n += c.nRAll;
    m.sum += c.sumRAll;
    m.sumSq += c.sumR2All;
    m.centred.n += c.nRAll;
    m.centred.sum += c.sumDAll;
    m.centred.sumSq += c.sumD2All;
  };
  for (const c of ctx.cells) {
    if (c.bucket < 0 || c.bucket >= b.count || c.action === '(null)') continue;
    const a = idOf(actionIds, c.action);
    add((all[a] ??= open(`*|${c.action}`, () => ({}), c.action)), c);
    for (let j = 0; j < cols.length; j++) {
      const col = cols[j] as string;
      const v = c.segment[j] as string;
      const row = ((byValue[j] as RewardGroup[][])[idOf(valueIds[j]!, v)] ??= []);
      add((row[a] ??= open(`${col}=${v}|${c.action}`, () => ({ [col]: v }), c.action)), c);
    }
  }
  return [...out.values()];
}

/** drift.reward: reward drift over time within segment × action (chi-square or ANOVA), best change point, BH. */
function checkRewardDrift(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('drift.reward', 'the propensity, action or reward role is missing');
  if (!ctx.buckets || ctx.buckets.count < 2) return skipped('drift.reward', ctx.roles.time ? 'the log spans a single time bucket' : 'no time column mapped');
  const binary = rewardKind(ctx) === 'binary';
  const tests: RewardDriftTest[] = [];
  const groups = groupsOf(ctx);
  for (const g of groups) {
    const used = g.buckets.map((m, i) => ({ m, i })).filter(({ m }) => m.n > 0);
    const windows = coarsen(g.buckets, TEST_WINDOWS).filter((m) => m.n >= MIN_BUCKET_ROWS);
    if (used.length < 2 || windows.length < 2) continue;
    // ANOVA is invariant to a common shift, so it reads the centred sums, whose within-group squares do not cancel
    const p = binary ? chiSquareHomogeneity(windows.map((m) => [m.sum, m.n - m.sum])).pValue : oneWayAnova(coarsen(g.buckets.map((m) => m.centred), TEST_WINDOWS).filter((m) => m.n >= MIN_BUCKET_ROWS)).pValue;
    const cp = bestChangePoint(used.map(({ m }) => m));
    const change = cp ? { ...cp, index: (used[cp.index] as { i: number }).i } : null;
    tests.push({ segment: g.segment, action: g.action, buckets: g.buckets, p, change });
  }
  if (binary) tests.push(...stratifiedTests(groups));
  const q = ctx.settings['drift.reward.q'];
  const minChange = ctx.settings['drift.reward.min_relative_change'];
  const bh = benjaminiHochberg(tests.map((t) => t.p), q);
  const flagged = tests
    .map((t, i) => ({ t, adj: bh.adjusted[i] as number, rej: bh.rejected[i] as boolean }))
    .filter((x) => x.rej && x.t.change && Math.abs(x.t.change.relativeChange) >= minChange)
    .sort((a, b) => a.adj - b.adj || Math.abs(b.t.change!.relativeChange) - Math.abs(a.t.change!.relativeChange));
  const b = ctx.buckets;
  const findings: DraftFinding[] = flagged.slice(0, MAX_FINDINGS).map(({ t, adj }) => {
    const ch = t.change!;
    const where = and(segmentPredicate(ctx.rows!, ctx.segmentColumns, t.segment), t.action === '*' ? undefined : `${ctx.rows!.action} = ${ctx.rows!.dialect.literal(t.action)}`, windowPredicate(ctx.rows!, b, ch.index, b.count - 1), finiteReward(ctx.rows!.reward, ctx.rows!.dialect));
    const what = t.action === '*' ? `every action (stratified by action)` : t.action;
    return {
      segment: t.segment,
      ...(t.action === '*' ? {} : { action: t.action }),
      window: bucketWindow(b, ch.index, b.count),
      status: 'warn' as const,
      metrics: { mean_before: ch.meanBefore, mean_after: ch.meanAfter, relative_change: Number.isFinite(ch.relativeChange) ? ch.relativeChange : null, p_adjusted: adj, change_at: isoUs(b.originUs + ch.index * b.widthUs) },
      message: `${what} in ${describeSegment(t.segment)}: mean reward ${t.action === '*' ? 'relative to each action\'s own mean ' : ''}${fmt(ch.meanBefore)} → ${fmt(ch.meanAfter)} (${ch.relativeChange >= 0 ? '+' : ''}${pct(ch.relativeChange, 0)}) from ${isoUs(b.originUs + ch.index * b.widthUs)} (BH-adjusted p = ${fmt(adj, 2)})`,
      ...(where ? { where } : {}),
    };
  });
  const series: Series[] = flagged.slice(0, MAX_SERIES).map(({ t }) => driftSeries(t, b.originUs, b.widthUs, binary, switchMarks(versionSwitches(ctx), b)));
  const status = flagged.length ? 'warn' : 'pass';
  const bySegment = new Map<string, number>();
  for (const f of findings) bySegment.set(describeSegment(f.segment), (bySegment.get(describeSegment(f.segment)) ?? 0) + 1);
  const summary = flagged.length
    ? `Reward drifts in ${n_(flagged.length)} of ${n_(tests.length)} segment × action series (BH q = ${q}, change ≥ ${pct(minChange, 0)}), mostly in ${[...bySegment.entries()].sort((a, c) => c[1] - a[1]).slice(0, 2).map(([s, n]) => `${s} (${n} series)`).join(', ')}.`
    : `No reward drift across ${n_(tests.length)} segment × action series (${binary ? 'chi-square' : 'ANOVA'}, BH q = ${q}).`;
  const left = notListed(flagged.length - findings.length, MAX_FINDINGS, 'series, smallest adjusted p first');
  return result('drift.reward', status, summary + left.note, { tests: tests.length, drifting: flagged.length, test: binary ? 'chi-square homogeneity' : 'one-way ANOVA', ...left.metrics }, findings, ['drift.reward.q', 'drift.reward.min_relative_change'], series);
}

/**
 * Per segment, all actions at once while holding the action fixed: a generalized Cochran–Mantel–
 * Haenszel test of reward × time window stratified by action, so a change of action mix is not taken
 * for reward drift. The change point runs on action-adjusted rewards r − mean_a (action means over
 * the whole period), reported as means of the raw reward before and after.
 */
function stratifiedTests(groups: ReturnType<typeof groupsOf>): RewardDriftTest[] {
  const bySegment = new Map<string, { segment: Record<string, string>; parts: ReturnType<typeof groupsOf> }>();
  for (const g of groups) {
    const k = JSON.stringify(g.segment);
    const e = bySegment.get(k) ?? { segment: g.segment, parts: [] };
    e.parts.push(g);
    bySegment.set(k, e);
  }
  const out: RewardDriftTest[] = [];
  for (const { segment, parts } of bySegment.values()) {
    if (parts.length < 2) continue;
    const strata = parts.map((g) => {
      const w = coarsen(g.buckets, TEST_WINDOWS);
      return { events: w.map((m) => m.sum), rows: w.map((m) => m.n) };
    });
    const { pValue } = cmhGeneralAssociation(strata);
    const width = parts[0]!.buckets.length;
    const raw: GroupMoments[] = [];
    const adjusted: GroupMoments[] = [];
    const means = parts.map((g) => {
      const n = g.buckets.reduce((s, m) => s + m.n, 0);
      return n ? g.buckets.reduce((s, m) => s + m.sum, 0) / n : 0;
    });
    for (let i = 0; i < width; i++) {
      let n = 0, sum = 0, sumSq = 0, adj = 0, adjSq = 0;
      parts.forEach((g, a) => {
        const m = g.buckets[i]!;
        const mu = means[a] as number;
        n += m.n;
        sum += m.sum;
        sumSq += m.sumSq;
        adj += m.sum - m.n * mu;
        adjSq += m.sumSq - 2 * mu * m.sum + m.n * mu * mu;
      });
      raw.push({ n, sum, sumSq });
      adjusted.push({ n, sum: adj, sumSq: Math.max(adjSq, n > 0 ? (adj * adj) / n : 0) });
    }
    const cp = bestChangePoint(adjusted);
    let change: ChangePoint | null = null;
    if (cp) {
      const before = raw.slice(0, cp.index), after = raw.slice(cp.index);
      const mean = (xs: GroupMoments[]) => xs.reduce((s, m) => s + m.sum, 0) / Math.max(1, xs.reduce((s, m) => s + m.n, 0));
      const mb = mean(before), ma = mean(after);
      change = { ...cp, meanBefore: mb, meanAfter: ma, relativeChange: mb !== 0 ? (ma - mb) / Math.abs(mb) : 0 };
    }
    out.push({ segment, action: '*', buckets: raw, p: pValue, change });
  }
  return out;
}

/** The mean per bucket with a 95% band: Wilson score intervals for a 0/1 reward (inside [0, 1]), normal ones otherwise. */
function driftSeries(t: RewardDriftTest, originUs: number, widthUs: number, binary: boolean, marks: NonNullable<Series['marks']>): Series {
  const mean = t.buckets.map((m) => (m.n > 0 ? m.sum / m.n : null));
  const band = t.buckets.map((m): [number, number] | null => {
    if (binary) {
      if (m.n < 1) return null;
      const ci = wilsonInterval(Math.round(m.sum), m.n, Z95);
      return [ci.low, ci.high];
    }
    if (m.n < 2) return null;
    const v = Math.max(0, (m.sumSq - (m.sum * m.sum) / m.n) / (m.n - 1));
    const half = Z95 * Math.sqrt(v / m.n);
    const mu = m.sum / m.n;
    return [mu - half, mu + half];
  });
  return {
    name: `reward: ${t.action === '*' ? 'all actions' : t.action} in ${describeSegment(t.segment)}`,
    kind: 'lines',
    x: t.buckets.map((_, i) => isoUs(originUs + i * widthUs)),
    values: [mean, band.map((x) => (x ? x[0] : null)), band.map((x) => (x ? x[1] : null))],
    labels: ['mean', 'ci_low', 'ci_high'],
    unit: t.change ? `change at ${isoUs(originUs + t.change.index * widthUs)}` : 'reward',
    ...(marks.length ? { marks } : {}),
  };
}

export const driftReward: CheckDefinition<'drift.reward'> = defineCheck('drift.reward', {
  title: 'Reward drift', blocking: false, panel: 'drift', remedies: ['plan'],
  settings: ['drift.reward.q', 'drift.reward.min_relative_change'],
}, checkRewardDrift);
