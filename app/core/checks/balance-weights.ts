import { defineCheck, type CheckDefinition } from './define.ts';
import { pairKeys, SEP } from '../cube/rollup.ts';
import type { CubeCell } from '../cube/types.ts';
import type { Series } from '../model/report.ts';
import { segmentAxis, segmentText } from '../segment-map.ts';
import { benjaminiHochberg } from '../stats/bh.ts';
import { bestChangePoint } from '../stats/changepoint.ts';
import { countBalance } from '../stats/balance.ts';
import { bucketWindow, describeSegment, finite, fmt, result, segmentRecord, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { and, segmentPredicate, windowPredicate } from './predicates.ts';

const MAX_FINDINGS = 25;
/** groups of the tests left out near the floor named in one finding, per action */
const MAX_LISTED = 40;

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
  /** logged rows of the action in the group, and the count the logged propensities lead one to expect */
  readonly count: number;
  readonly expected: number;
  readonly method: 'exact binomial' | 'normal';
  /** the group holds a row of this action with a valid propensity below the floor: the test is left out */
  readonly belowFloor: boolean;
  /** indexes (ascending) of the cells of the test's group, all actions */
  readonly members: readonly number[];
}

/** Actions never logged in the segment of cube cell i (the full segment: all segment columns). */
type Ineligible = (i: number) => readonly string[];

function ineligibility(cells: readonly CubeCell[], segmentKeyOf: (c: CubeCell) => string, actions: readonly string[]): Ineligible {
  const logged = new Map<string, Set<string>>();
  for (const c of cells) {
    const k = segmentKeyOf(c);
    let set = logged.get(k);
    if (!set) logged.set(k, (set = new Set()));
    if (c.nP > 0) set.add(c.action);
  }
  const missing = new Map<string, readonly string[]>();
  for (const [k, set] of logged) missing.set(k, actions.filter((a) => !set.has(a)));
  const keys = cells.map((c) => missing.get(segmentKeyOf(c)) ?? []);
  return (i) => keys[i] ?? [];
}

/** An action with no logged row in a group of rows: support / eligibility information, not a balance test. */
interface NeverLogged {
  readonly scope: Test['scope'];
  readonly segment: Record<string, string>;
  readonly action: string;
  readonly bucket?: number;
  readonly version?: string;
  readonly n: number;
}

interface GroupMeta {
  readonly segment: Record<string, string>;
  readonly bucket?: number;
  readonly version?: string;
}

/**
 * Groups rows, then for every action a logged in the group: B = (1/n) Σ 1[a_i = a]/p_i (E[B] = 1), tested
 * by countBalance (exact binomial below `minExpected` expected events, normal above). Actions not logged
 * in the group go to `never`. `key` names a cell's group (null: in none); `meta` describes a group from its first cell.
 */
function testsFor(scope: Test['scope'], cells: readonly CubeCell[], floor: number, minExpected: number, key: (c: CubeCell, i: number) => string | null, meta: (c: CubeCell) => GroupMeta, actions: readonly string[], ineligible: Ineligible, never: NeverLogged[]): Test[] {
  const groups = new Map<string, { meta: GroupMeta; nP: number; outside: Map<string, number>; byAction: Map<string, { c: number; s1: number; s2: number; low: boolean }>; members: number[] }>();
  cells.forEach((c, i) => {
    const k = key(c, i);
    if (k === null) return;
    let e = groups.get(k);
    if (!e) groups.set(k, (e = { meta: meta(c), nP: 0, outside: new Map(), byAction: new Map(), members: [] }));
    e.members.push(i);
    e.nP += c.nP;
    for (const a of ineligible(i)) e.outside.set(a, (e.outside.get(a) ?? 0) + c.nP);
    let a = e.byAction.get(c.action);
    if (!a) e.byAction.set(c.action, (a = { c: 0, s1: 0, s2: 0, low: false }));
    a.c += c.nP;
    a.s1 += c.sumInvP;
    a.s2 += c.sumInvP2;
    a.low ||= c.minP !== null && c.minP < floor;
  });
  const out: Test[] = [];
  for (const e of groups.values()) {
    const where = { segment: e.meta.segment, ...(e.meta.bucket !== undefined ? { bucket: e.meta.bucket } : {}), ...(e.meta.version !== undefined ? { version: e.meta.version } : {}) };
    for (const action of actions) {
      const s = e.byAction.get(action);
      // rows of segments where the action was never logged are outside its support: not part of its test
      const n = e.nP - (e.outside.get(action) ?? 0);
      if (!s || s.c === 0) {
        if (n === e.nP || scope === 'segment' || scope === 'segment value') never.push({ scope, ...where, action, n: e.nP });
        continue;
      }
      if (n < 2) continue;
      const wb = countBalance(n, s.c, s.s1, s.s2, minExpected);
      out.push({ scope, ...where, action, n, balance: wb.balance, se: wb.se, z: wb.z, p: wb.pValue, count: s.c, expected: wb.expected, method: wb.method, belowFloor: s.low, members: e.members });
    }
  }
  return out;
}

/** balance.weights: the weight-balance identity E[1{A=a}/p] = 1 per action, segment, time bucket and version, with BH. */
function checkBalance(ctx: AuditContext): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('balance.weights', 'the propensity, action or reward role is missing');
  const cols = ctx.segmentColumns;
  const actions = ctx.view.actions;
  const cells = ctx.cells.filter((c) => c.action !== '(null)');
  const floor = ctx.settings['support.floor.epsilon'];
  const minExpected = ctx.settings['balance.min_expected'];
  const never: NeverLogged[] = [];
  const ineligible = ineligibility(cells, ctx.view.segmentKeyOf, actions);
  const tests: Test[] = [
    ...testsFor('action', cells, floor, minExpected, () => 'all', () => ({ segment: {} }), actions, ineligible, never),
    ...cols.flatMap((col, j) => testsFor('segment value', cells, floor, minExpected, (c) => c.segment[j] as string, (c) => ({ segment: { [col]: c.segment[j] as string } }), actions, ineligible, never)),
    ...(cols.length > 1 ? testsFor('segment', cells, floor, minExpected, ctx.view.segmentKeyOf, (c) => ({ segment: segmentRecord(cols, c.segment) }), actions, ineligible, never) : []),
    ...(ctx.buckets ? testsFor('time bucket', cells, floor, minExpected, (c) => (c.bucket < 0 ? null : String(c.bucket)), (c) => ({ segment: {}, bucket: c.bucket }), actions, ineligible, never) : []),
    ...(ctx.roles.policy_version
      ? cols.flatMap((col, j) => {
        const key = pairKeys((v, version) => `${v}${SEP}${version}`);
        return testsFor('policy version', cells, floor, minExpected, (c) => key(c.segment[j] as string, c.version), (c) => ({ segment: { [col]: c.segment[j] as string }, version: c.version }), actions, ineligible, never);
      })
      : []),
  ];
  const q = ctx.settings['balance.q'];
  const minEffect = ctx.settings['balance.min_effect'];
  // Where a group holds a row of the action with a propensity below the floor, a few huge weights
  // dominate B, so the test is unreliable there; it is left out of that group only (support.floor
  // reports those cells), listed in a finding, and the check warns.
  const tested = tests.filter((t) => !t.belowFloor);
  const leftOut = tests.filter((t) => t.belowFloor);
  const bh = benjaminiHochberg(tested.map((t) => t.p), q);
  const significant = tested.map((t, i) => ({ t, adj: bh.adjusted[i] as number, rejected: bh.rejected[i] as boolean })).filter((x) => x.rejected && Math.abs(x.t.balance - 1) > minEffect);
  const fails = failsWithout(cells, ineligible, minEffect, Math.max(0, ...significant.map((x) => x.t.p)), minExpected);
  const causes = smallestCauses(significant, cells.length, fails);
  const flagged = [...causes.chosen, ...explainAway(causes.rest, causes.removed, fails)];
  const versionWindows = versionSpans(ctx);
  const findings: DraftFinding[] = flagged.slice(0, MAX_FINDINGS).map(({ t, adj }) => {
    const accounts = causes.accounts.get(t);
    const episode = accounts !== undefined && ctx.buckets ? changeWindow(t, cells, ineligible) : null;
    const win = t.bucket !== undefined && ctx.buckets ? bucketWindow(ctx.buckets, t.bucket, t.bucket + 1) : episode && ctx.buckets ? bucketWindow(ctx.buckets, episode[0], episode[1] + 1) : t.version !== undefined ? versionWindows.get(t.version) : undefined;
    const segPred = segmentPredicate(ctx.rows!, cols, t.segment);
    const where = and(segPred, t.bucket !== undefined ? windowPredicate(ctx.rows!, ctx.buckets, t.bucket, t.bucket) : undefined, t.version !== undefined && ctx.rows!.version ? `${ctx.rows!.version} = ${ctx.rows!.dialect.literal(t.version)}` : undefined, `${ctx.rows!.action} = ${ctx.rows!.dialect.literal(t.action)}`);
    const scope = [describeSegment(t.segment), t.version !== undefined ? `policy ${t.version}` : '', win && t.bucket !== undefined ? `${win.from}` : '', win && episode ? `from ${win.from.slice(0, 10)} to ${win.to.slice(0, 10)}` : ''].filter(Boolean).join(', ');
    const accountNote = accounts !== undefined ? `; leaving this group's rows out explains ${accounts} of the ${significant.length} failing tests` : '';
    return {
      segment: t.segment,
      action: t.action,
      ...(win ? { window: win } : {}),
      status: 'fail' as const,
      metrics: { scope: t.scope, balance: t.balance, se: t.se, z: Number.isFinite(t.z) ? t.z : null, p_adjusted: adj, rows: t.n, logged: t.count, expected: t.expected, test: t.method, ...(t.version !== undefined ? { version: t.version } : {}), ...(accounts !== undefined ? { accounts_for: accounts } : {}) },
      message: `${t.action} in ${scope}: B = ${fmt(t.balance)} (expected 1; logged ${t.count} times where the logged propensities lead one to expect ${fmt(t.expected)}; ${t.method} test, z = ${Number.isFinite(t.z) ? t.z.toFixed(1) : t.z > 0 ? '+∞' : '−∞'}, BH-adjusted p = ${fmt(adj, 2)}${accountNote}) — ${t.balance < 1 ? 'the action is logged less often than its propensities claim, or is not supported everywhere' : 'the action is logged more often than its propensities claim'}`,
      ...(where ? { where } : {}),
    };
  });
  let nP = 0, s1 = 0;
  for (const c of cells) {
    nP += c.nP;
    s1 += c.sumInvP;
  }
  const meanInvP = nP > 0 ? s1 / nP : null;
  findings.push(...leftOutFindings(leftOut, floor));
  const status = flagged.length ? 'fail' : leftOut.length ? 'warn' : 'pass';
  const overall = tests.filter((t) => t.scope === 'action');
  const neverSegments = never.filter((x) => x.scope === (cols.length > 1 ? 'segment' : 'segment value'));
  const neverNote = neverSegments.length ? ` ${neverSegments.length} segment × action cell(s) were never logged: support information (support.target weighs them against each target), not a balance test.` : '';
  const leftNote = leftOut.length ? ` ${leftOut.length} test(s) left out where their own group holds a propensity below ε = ${floor}.` : '';
  const summary = flagged.length
    ? `${significant.length} of ${tested.length} balance tests fail (BH q = ${q}, |B − 1| > ${minEffect}), explained by ${flagged.length} group(s); worst: ${findings[0]?.message.split(' — ')[0] ?? ''}.${leftNote}${neverNote}`
    : `All ${tested.length} balance tests hold (BH q = ${q}); mean 1/p = ${fmt(meanInvP)} for ${actions.length} actions.${leftNote}${neverNote}`;
  return result(
    'balance.weights',
    status,
    summary,
    { tests: tested.length, skipped_below_floor: leftOut.length, exact_tests: tested.filter((t) => t.method === 'exact binomial').length, never_logged: never.length, failing: significant.length, groups: flagged.length, mean_inverse_propensity: meanInvP, actions: actions.length },
    findings,
    ['balance.q', 'balance.min_effect', 'balance.min_expected', 'support.floor.epsilon'],
    [
      { name: 'balance B by action', kind: 'bars', x: overall.map((t) => t.action), values: [overall.map((t) => t.balance)], labels: ['B'], unit: 'B (expected 1)' },
      balanceHeatmap(tests.filter((t) => t.scope === (cols.length > 1 ? 'segment' : 'segment value')), neverSegments, cols, actions),
    ],
  );
}

/** Whether a test still fails with the marked cells left out of its group (false when too few rows remain). */
type FailsWithout = (t: Test, removed: Uint8Array) => boolean;

function failsWithout(cells: readonly CubeCell[], ineligible: Ineligible, minEffect: number, pCut: number, minExpected: number): FailsWithout {
  return (t, removed) => {
    let nP = 0, k = 0, s1 = 0, s2 = 0;
    for (const i of t.members) {
      if (removed[i]) continue;
      const c = cells[i] as CubeCell;
      if (!ineligible(i).includes(t.action)) nP += c.nP;
      if (c.action === t.action) {
        k += c.nP;
        s1 += c.sumInvP;
        s2 += c.sumInvP2;
      }
    }
    if (nP < 2 || k === 0) return false;
    const wb = countBalance(nP, k, s1, s2, minExpected);
    return wb.pValue <= pCut && Math.abs(wb.balance - 1) > minEffect;
  };
}

/** Scopes a cause is named in: one segment value × action, or one segment value × action under one policy version. */
const CAUSE_SCOPES: ReadonlySet<Test['scope']> = new Set(['segment value', 'policy version']);
/** Bounds the search: candidates × the cells read per candidate (every failing test's group once). */
const CAUSE_WORK = 20_000_000;
const MAX_CAUSE_CANDIDATES = 48;

/**
 * The smallest groups that account for the failing tests: greedily, the segment value × action (× version)
 * group whose rows, left out, make the most still-unexplained failing tests hold, ties to the group with fewer
 * rows (so riverside under v8 wins over riverside, which explains the same tests) and then to the larger
 * deviation. A group must account for more than its own test. What no such group explains is returned in
 * `rest`, with the cells already accounted for in `removed`.
 */
function smallestCauses<T extends { t: Test }>(failing: readonly T[], cellCount: number, fails: FailsWithout): { chosen: T[]; accounts: Map<Test, number>; rest: T[]; removed: Uint8Array } {
  const removed = new Uint8Array(cellCount);
  const work = failing.reduce((s, x) => s + x.t.members.length, 0);
  const limit = Math.min(MAX_CAUSE_CANDIDATES, Math.floor(CAUSE_WORK / Math.max(1, work)));
  const candidates = failing.filter((x) => CAUSE_SCOPES.has(x.t.scope)).sort((a, b) => Math.abs(b.t.z) - Math.abs(a.t.z) || b.t.n - a.t.n).slice(0, limit);
  const chosen: T[] = [];
  const accounts = new Map<Test, number>();
  let open = [...failing];
  for (;;) {
    let best: { x: T; explains: Set<T> } | null = null;
    for (const x of candidates) {
      if (chosen.includes(x)) continue;
      const mark = removed.slice();
      for (const i of x.t.members) mark[i] = 1;
      const explains = new Set(open.filter((y) => !fails(y.t, mark)));
      if (explains.size < 2) continue;
      const better = !best || explains.size > best.explains.size || (explains.size === best.explains.size && (x.t.n < best.x.t.n || (x.t.n === best.x.t.n && Math.abs(x.t.balance - 1) > Math.abs(best.x.t.balance - 1))));
      if (better) best = { x, explains };
    }
    if (!best) break;
    chosen.push(best.x);
    accounts.set(best.x.t, best.explains.size);
    for (const i of best.x.t.members) removed[i] = 1;
    open = open.filter((y) => !best!.explains.has(y));
  }
  return { chosen, accounts, rest: open, removed };
}

/**
 * Where a cause's deviation starts and ends, in time buckets: the least-squares change point of 1{A=a}/p over
 * the group's buckets (bestChangePoint) cuts off the side nearer 1 when it lies within a quarter of the other
 * side's distance from 1 (so noise inside a steady episode cuts nothing), and once more inside what is left.
 */
function changeWindow(t: Test, cells: readonly CubeCell[], ineligible: Ineligible): [number, number] | null {
  const byBucket = new Map<number, { n: number; sum: number; sumSq: number }>();
  for (const i of t.members) {
    const c = cells[i] as CubeCell;
    if (c.bucket < 0) continue;
    const g = byBucket.get(c.bucket) ?? { n: 0, sum: 0, sumSq: 0 };
    if (!ineligible(i).includes(t.action)) g.n += c.nP;
    if (c.action === t.action) {
      g.sum += c.sumInvP;
      g.sumSq += c.sumInvP2;
    }
    byBucket.set(c.bucket, g);
  }
  let span = [...byBucket.keys()].filter((b) => (byBucket.get(b)?.n ?? 0) > 0).sort((a, b) => a - b);
  if (span.length === 0) return null;
  for (let level = 0; level < 2 && span.length > 1; level++) {
    const groups = span.map((b) => byBucket.get(b) as { n: number; sum: number; sumSq: number });
    const cp = bestChangePoint(groups);
    if (!cp) break;
    const [before, after] = [Math.abs(cp.meanBefore - 1), Math.abs(cp.meanAfter - 1)];
    const far = Math.max(before, after), near = Math.min(before, after);
    if (near >= far / 4) break;
    span = after >= before ? span.slice(cp.index) : span.slice(0, cp.index);
  }
  return [span[0] as number, span[span.length - 1] as number];
}

/**
 * What the smallest causes leave unexplained, reported as the fewest groups: most extreme deviation first; a
 * later test is kept only if it still fails once the rows of groups already reported are left out (so a
 * mis-logged region does not also show up as every device and tenure that contains it).
 */
function explainAway<T extends { t: Test }>(flagged: readonly T[], covered: Uint8Array, fails: FailsWithout): T[] {
  const order = [...flagged].sort((a, b) => Math.abs(b.t.balance - 1) - Math.abs(a.t.balance - 1) || b.t.n - a.t.n);
  const kept: T[] = [];
  for (const x of order) {
    if (fails(x.t, covered)) {
      kept.push(x);
      for (const i of x.t.members) covered[i] = 1;
    }
  }
  return kept;
}

/** One warning per action listing the tests left out because their own group holds a below-floor propensity. */
function leftOutFindings(leftOut: readonly Test[], floor: number): DraftFinding[] {
  const byAction = new Map<string, Test[]>();
  for (const t of leftOut) byAction.set(t.action, [...(byAction.get(t.action) ?? []), t]);
  return [...byAction].map(([action, list]) => {
    const names = list.map((t) => `${t.scope} ${describeSegment(t.segment)}${t.bucket !== undefined ? ` bucket ${t.bucket}` : ''}${t.version !== undefined ? ` version ${t.version}` : ''}`);
    const shown = names.slice(0, MAX_LISTED).join('; ') + (names.length > MAX_LISTED ? `; and ${names.length - MAX_LISTED} more` : '');
    return {
      segment: {},
      action,
      status: 'warn' as const,
      metrics: { left_out: list.length, ...Object.fromEntries(['action', 'segment value', 'segment', 'time bucket', 'policy version'].map((s) => [`left_out.${s}`, list.filter((t) => t.scope === s).length])) },
      message: `${list.length} balance test(s) of ${action} left out because their group holds a propensity below ε = ${floor} (a few huge weights make B unreliable there; support.floor lists the cells): ${shown}`,
    };
  });
}

/**
 * z by segment × action. Cells without a z are null, with the reason beside them in `null_reasons`: an
 * action never logged in the segment (support information), or a segment too small to test.
 */
function balanceHeatmap(tests: readonly Test[], never: readonly NeverLogged[], cols: readonly string[], actions: readonly string[]): Series {
  const parts = (s: Record<string, string>) => cols.filter((c) => s[c] !== undefined).map((c) => ({ column: c, value: s[c] as string }));
  const label = (s: Record<string, string>) => segmentText(parts(s));
  const { labels: segs, keys } = segmentAxis('y', [...tests, ...never].map((t) => parts(t.segment)));
  const idx = new Map(tests.map((t) => [`${label(t.segment)}|${t.action}`, finite(t.z)]));
  const unlogged = new Set(never.map((t) => `${label(t.segment)}|${t.action}`));
  const reason = (k: string) => (unlogged.has(k) ? 'never logged' : 'not tested');
  return {
    name: 'balance z by segment and action',
    kind: 'heatmap',
    x: actions,
    y: segs,
    values: segs.map((s) => actions.map((a) => idx.get(`${s}|${a}`) ?? null)),
    null_reasons: segs.map((s) => actions.map((a) => (idx.get(`${s}|${a}`) ?? null) === null ? reason(`${s}|${a}`) : null)),
    unit: 'z',
    segment_keys: keys,
  };
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
  settings: ['balance.q', 'balance.min_effect', 'balance.min_expected', 'support.floor.epsilon'],
  run: checkBalance,
});
