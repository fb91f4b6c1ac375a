import { defineCheck, type CheckDefinition } from './define.ts';
import { bucketWindow, isoUs, pct, result, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { runs } from './locate.ts';
import { and, finiteReward, windowPredicate } from './predicates.ts';
import { counted } from '../count-words.ts';

export type RewardKind = 'binary' | 'bounded' | 'continuous';

export function rewardKind(ctx: AuditContext): RewardKind | null {
  const c = ctx.profile.columns.find((x) => x.name === ctx.roles.reward);
  if (!c) return null;
  if (c.kind === 'boolean' || (c.nonBinary === 0 && c.nonNull > 0)) return 'binary';
  if (c.min !== null && c.max !== null && c.min >= 0 && c.max <= 1) return 'bounded';
  return 'continuous';
}

/** reward.validity: missing rewards (overall and by time), range, kind, non-finite values. */
function checkRewardValidity(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('reward.validity', 'the propensity, action or reward role is missing');
  const t = ctx.view.total;
  const share = t.nRNull / Math.max(1, t.n);
  const warnAt = ctx.settings['reward.validity.warn_null'];
  const failAt = ctx.settings['reward.validity.fail_null'];
  const c = ctx.profile.columns.find((x) => x.name === ctx.roles.reward);
  const kind = rewardKind(ctx);
  const findings: DraftFinding[] = [];
  let status: 'pass' | 'warn' | 'fail' = share > failAt ? 'fail' : share > warnAt ? 'warn' : 'pass';
  const b = ctx.buckets;
  const perBucket: { n: number; miss: number }[] = b ? Array.from({ length: b.count }, () => ({ n: 0, miss: 0 })) : [];
  if (b) {
    for (const cell of ctx.cells) {
      const g = perBucket[cell.bucket];
      if (!g) continue;
      g.n += cell.n;
      g.miss += cell.nRNull;
    }
    const hot = perBucket.map((g, i) => (g.n > 0 && g.miss / g.n > failAt ? i : -1)).filter((i) => i >= 0);
    for (const [a, z] of runs(hot)) {
      const rows = perBucket.slice(a, z + 1).reduce((s, g) => s + g.n, 0);
      const miss = perBucket.slice(a, z + 1).reduce((s, g) => s + g.miss, 0);
      const atEnd = z === b.count - 1;
      const where = and(windowPredicate(ctx.rows, b, a, z), ctx.rows.dialect.notTrue(finiteReward(ctx.rows.reward, ctx.rows.dialect)));
      findings.push({
        segment: {},
        window: bucketWindow(b, a, z + 1),
        status: 'warn',
        metrics: { rows, missing: miss, share: miss / Math.max(1, rows) },
        message: `${pct(miss / Math.max(1, rows))} of rewards missing from ${isoUs(b.originUs + a * b.widthUs)} to ${isoUs(b.originUs + (z + 1) * b.widthUs)}${atEnd ? ' (the end of the log: feedback has probably not arrived yet)' : ''}`,
        ...(where ? { where } : {}),
      });
      if (status === 'pass') status = 'warn';
    }
  }
  const nonFinite = c ? c.nan + c.infinite : 0;
  if (nonFinite > 0) findings.push({ segment: {}, status: 'warn', metrics: { rows: nonFinite }, message: `${nonFinite} rewards are NaN or infinite` });
  if (nonFinite > 0 && status === 'pass') status = 'warn';
  const summary = `${pct(share, 2)} of rewards missing (warn above ${pct(warnAt)}, fail above ${pct(failAt)}); ${kind ?? 'unknown'} reward in [${c?.min ?? '?'}, ${c?.max ?? '?'}]${findings.some((f) => f.window) ? `; missing feedback concentrated in ${counted(findings.filter((f) => f.window).length, 'window')}` : ''}.`;
  return result(
    'reward.validity',
    status,
    summary,
    { missing: t.nRNull, missing_share: share, kind, min: c?.min ?? null, max: c?.max ?? null, non_finite: nonFinite, mean: t.nRAll > 0 ? t.sumRAll / t.nRAll : null },
    findings,
    ['reward.validity.warn_null', 'reward.validity.fail_null'],
    b ? [{ name: 'missing reward share per bucket', kind: 'bars', x: perBucket.map((_, i) => isoUs(b.originUs + i * b.widthUs)), values: [perBucket.map((g) => (g.n ? g.miss / g.n : null))], labels: ['missing share'], unit: 'share' }] : [],
  );
}

export const rewardValidity: CheckDefinition<'reward.validity'> = defineCheck('reward.validity', {
  title: 'Reward values', blocking: true, panel: 'drift', remedies: ['plan'],
  settings: ['reward.validity.warn_null', 'reward.validity.fail_null'],
}, checkRewardValidity);
