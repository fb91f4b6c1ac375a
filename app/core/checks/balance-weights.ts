import { defineCheck, type CheckDefinition } from './define.ts';
import { pairKeys, SEP } from '../cube/rollup.ts';
import type { CubeCell } from '../cube/types.ts';
import { literal } from '../sql/quote.ts';
import { benjaminiHochberg } from '../stats/bh.ts';
import { neverLoggedBalance, weightBalance } from '../stats/balance.ts';
import { bucketWindow, describeSegment, fmt, result, segmentRecord, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { and, segmentPredicate, windowPredicate } from './predicates.ts';

const MIN_ROWS = 50;
const MAX_FINDINGS = 25;

interface Test {
  readonly scope: 'action' | 'segment value' | 'segment' | 'time bucket' | 'policy version';
  readonly segment: Record<string, string>;
  readonly action: string;
  readonly bucket?: number;
  readonly version?: string;
  readonly n: number;
  readonly balance: number;
  readonly se: number;
  readonly z: number;
  readonly p: number;
  /** indexes (ascending) of the cells of the test's group, all actions */
  readonly members: readonly number[];
}

interface GroupMeta {
  readonly segment: Record<string, string>;
  readonly bucket?: number;
  readonly version?: string;
}

/**
 * Groups rows, then for every action a in the group: B = (1/n) Σ 1[a_i = a]/p_i (E[B] = 1).
 * `key` names a cell's group (null: in none); `meta` describes a group from its first cell.
 */
function testsFor(scope: Test['scope'], cells: readonly CubeCell[], floor: number, key: (c: CubeCell, i: number) => string | null, meta: (c: CubeCell) => GroupMeta, actions: readonly string[]): Test[] {
  const groups = new Map<string, { meta: GroupMeta; nP: number; byAction: Map<string, { s1: number; s2: number }>; members: number[] }>();
  cells.forEach((c, i) => {
    const k = key(c, i);
    if (k === null) return;
    let e = groups.get(k);
    if (!e) groups.set(k, (e = { meta: meta(c), nP: 0, byAction: new Map(), members: [] }));
    e.members.push(i);
    e.nP += c.nP;
    let a = e.byAction.get(c.action);
    if (!a) e.byAction.set(c.action, (a = { s1: 0, s2: 0 }));
    a.s1 += c.sumInvP;
    a.s2 += c.sumInvP2;
  });
  const out: Test[] = [];
  for (const e of groups.values()) {
    if (e.nP < MIN_ROWS) continue;
    for (const action of actions) {
      const s = e.byAction.get(action) ?? { s1: 0, s2: 0 };
      const wb = s.s1 > 0 ? weightBalance(e.nP, s.s1, s.s2) : neverLoggedBalance(e.nP, floor);
      out.push({ scope, segment: e.meta.segment, action, ...(e.meta.bucket !== undefined ? { bucket: e.meta.bucket } : {}), ...(e.meta.version !== undefined ? { version: e.meta.version } : {}), n: e.nP, balance: wb.balance, se: wb.se, z: wb.z, p: wb.pValue, members: e.members });
    }
  }
  return out;
}

/** balance.weights: the weight-balance identity E[1{A=a}/p] = 1 per action, segment, time bucket and version, with BH. */
export function checkBalance(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('balance.weights', 'the propensity, action or reward role is missing');
  const cols = ctx.segmentColumns;
  const actions = ctx.view.actions;
  const cells = ctx.cells.filter((c) => c.action !== '(null)');
  const floor = ctx.settings['support.floor.epsilon'];
  const tests: Test[] = [
    ...testsFor('action', cells, floor, () => 'all', () => ({ segment: {} }), actions),
    ...cols.flatMap((col, j) => testsFor('segment value', cells, floor, (c) => c.segment[j] as string, (c) => ({ segment: { [col]: c.segment[j] as string } }), actions)),
    ...(cols.length > 1 ? testsFor('segment', cells, floor, ctx.view.segmentKeyOf, (c) => ({ segment: segmentRecord(cols, c.segment) }), actions) : []),
    ...(ctx.buckets ? testsFor('time bucket', cells, floor, (c) => (c.bucket < 0 ? null : String(c.bucket)), (c) => ({ segment: {}, bucket: c.bucket }), actions) : []),
    ...(ctx.roles.policy_version
      ? cols.flatMap((col, j) => {
        const key = pairKeys((v, version) => `${v}${SEP}${version}`);
        return testsFor('policy version', cells, floor, (c) => key(c.segment[j] as string, c.version), (c) => ({ segment: { [col]: c.segment[j] as string }, version: c.version }), actions);
      })
      : []),
  ];
  const q = ctx.settings['balance.q'];
  const minEffect = ctx.settings['balance.min_effect'];
  // Where an action's propensity drops below the floor somewhere in a group's segment, its few huge
  // weights dominate B and are often absent from a given bucket, so B and its SE are unreliable there;
  // support.floor reports those cells. Tests of an action never logged in the group stay.
  const low = lowFloorIndex(cells, cols, floor);
  const tested = tests.filter((t) => Number.isNaN(t.z) || !low.has(`${JSON.stringify(t.segment)}|${t.action}`));
  const bh = benjaminiHochberg(tested.map((t) => t.p), q);
  const significant = tested.map((t, i) => ({ t, adj: bh.adjusted[i] as number, rejected: bh.rejected[i] as boolean })).filter((x) => x.rejected && Math.abs(x.t.balance - 1) > minEffect);
  const flagged = explainAway(significant, cells, minEffect, Math.max(0, ...significant.map((x) => x.t.p)), floor);
  const versionWindows = versionSpans(ctx);
  const findings: DraftFinding[] = flagged.slice(0, MAX_FINDINGS).map(({ t, adj }) => {
    const win = t.bucket !== undefined && ctx.buckets ? bucketWindow(ctx.buckets, t.bucket, t.bucket + 1) : t.version !== undefined ? versionWindows.get(t.version) : undefined;
    const segPred = segmentPredicate(ctx.rows!, cols, t.segment);
    const where = and(segPred, t.bucket !== undefined ? windowPredicate(ctx.rows!, ctx.buckets, t.bucket, t.bucket) : undefined, t.version !== undefined && ctx.rows!.version ? `${ctx.rows!.version} = ${literal(t.version)}` : undefined, `${ctx.rows!.action} = ${literal(t.action)}`);
    const scope = [describeSegment(t.segment), t.version !== undefined ? `policy ${t.version}` : '', win && t.bucket !== undefined ? `${win.from}` : ''].filter(Boolean).join(', ');
    return {
      segment: t.segment,
      action: t.action,
      ...(win ? { window: win } : {}),
      status: 'fail' as const,
      metrics: { scope: t.scope, balance: t.balance, se: t.se, z: Number.isFinite(t.z) ? t.z : null, p_adjusted: adj, rows: t.n, ...(t.version !== undefined ? { version: t.version } : {}) },
      message: `${t.action} in ${scope}: ${Number.isNaN(t.z) ? `never logged in ${t.n} rows (p ≤ (1 − ε)^n)` : `B = ${fmt(t.balance)} (expected 1; z = ${Number.isFinite(t.z) ? t.z.toFixed(1) : t.z > 0 ? '+∞' : '−∞'}`}, BH-adjusted p = ${fmt(adj, 2)}) — ${t.balance < 1 ? 'the action is logged less often than its propensities claim, or is not supported everywhere' : 'the action is logged more often than its propensities claim'}`,
      ...(where ? { where } : {}),
    };
  });
  let nP = 0, s1 = 0;
  for (const c of cells) {
    nP += c.nP;
    s1 += c.sumInvP;
  }
  const meanInvP = nP > 0 ? s1 / nP : null;
  const status = flagged.length ? 'fail' : 'pass';
  const overall = tests.filter((t) => t.scope === 'action');
  const summary = flagged.length
    ? `${significant.length} of ${tested.length} balance tests fail (BH q = ${q}, |B − 1| > ${minEffect}), explained by ${flagged.length} group(s); worst: ${findings[0]?.message.split(' — ')[0] ?? ''}.`
    : `All ${tested.length} balance tests hold (BH q = ${q}); mean 1/p = ${fmt(meanInvP)} for ${actions.length} actions.`;
  return result(
    'balance.weights',
    status,
    summary,
    { tests: tested.length, skipped_below_floor: tests.length - tested.length, failing: significant.length, groups: flagged.length, mean_inverse_propensity: meanInvP, actions: actions.length },
    findings,
    ['balance.q', 'balance.min_effect'],
    [
      { name: 'balance B by action', kind: 'bars', x: overall.map((t) => t.action), values: [overall.map((t) => t.balance)], labels: ['B'], unit: 'B (expected 1)' },
      balanceHeatmap(tests.filter((t) => t.scope === (cols.length > 1 ? 'segment' : 'segment value')), cols, actions),
    ],
  );
}

/**
 * Reports the fewest groups that explain the failing tests: most extreme deviation first; a later test
 * is kept only if it still fails once the rows of groups already reported are left out (so a
 * mis-logged region does not also show up as every device and tenure that contains it).
 */
function explainAway<T extends { t: Test }>(flagged: readonly T[], cells: readonly CubeCell[], minEffect: number, pCut: number, floor: number): T[] {
  const order = [...flagged].sort((a, b) => Math.abs(b.t.balance - 1) - Math.abs(a.t.balance - 1) || b.t.n - a.t.n);
  const kept: T[] = [];
  const covered = new Uint8Array(cells.length);
  for (const x of order) {
    let nP = 0, s1 = 0, s2 = 0;
    for (const i of x.t.members) {
      if (covered[i]) continue;
      const c = cells[i] as CubeCell;
      nP += c.nP;
      if (c.action === x.t.action) {
        s1 += c.sumInvP;
        s2 += c.sumInvP2;
      }
    }
    if (nP < MIN_ROWS) continue;
    const wb = s1 > 0 ? weightBalance(nP, s1, s2) : neverLoggedBalance(nP, floor);
    if (wb.pValue <= pCut && Math.abs(wb.balance - 1) > minEffect) {
      kept.push(x);
      for (const i of x.t.members) covered[i] = 1;
    }
  }
  return kept;
}

/** Keys `${JSON.stringify(segment)}|action` of (segment pattern, action) pairs with a propensity below the floor. */
function lowFloorIndex(cells: readonly CubeCell[], cols: readonly string[], floor: number): Set<string> {
  const out = new Set<string>();
  for (const c of cells) {
    if (c.minP === null || c.minP >= floor) continue;
    out.add(`${JSON.stringify({})}|${c.action}`);
    cols.forEach((col, j) => out.add(`${JSON.stringify({ [col]: c.segment[j] })}|${c.action}`));
    out.add(`${JSON.stringify(segmentRecord(cols, c.segment))}|${c.action}`);
  }
  return out;
}

function balanceHeatmap(tests: readonly Test[], cols: readonly string[], actions: readonly string[]) {
  const label = (s: Record<string, string>) => cols.map((c) => s[c]).filter((x) => x !== undefined).join(' · ');
  const segs = [...new Set(tests.map((t) => label(t.segment)))].sort();
  const idx = new Map(tests.map((t) => [`${label(t.segment)}|${t.action}`, Number.isFinite(t.z) ? t.z : Number.isNaN(t.z) ? -99 : t.z > 0 ? 99 : -99]));
  return { name: 'balance z by segment and action', kind: 'heatmap' as const, x: actions, y: segs, values: segs.map((s) => actions.map((a) => idx.get(`${s}|${a}`) ?? null)), unit: 'z' };
}

/** Time span of each policy version, from the buckets it appears in. */
function versionSpans(ctx: AuditContext): Map<string, { from: string; to: string }> {
  const out = new Map<string, { from: string; to: string }>();
  if (!ctx.buckets) return out;
  const span = new Map<string, [number, number]>();
  for (const c of ctx.cells) {
    if (c.bucket < 0 || c.n === 0) continue;
    const s = span.get(c.version);
    span.set(c.version, s ? [Math.min(s[0], c.bucket), Math.max(s[1], c.bucket)] : [c.bucket, c.bucket]);
  }
  for (const [v, [a, b]] of span) out.set(v, bucketWindow(ctx.buckets, a, b + 1));
  return out;
}

export const balanceWeights: CheckDefinition<'balance.weights'> = defineCheck({
  id: 'balance.weights',
  title: 'Weight balance',
  blocking: true,
  panel: 'weights',
  settings: ['balance.q', 'balance.min_effect', 'support.floor.epsilon'],
  run: checkBalance,
});
