import { defineCheck, type CheckDefinition } from './define.ts';
import { pairKeys, SEP } from '../cube/rollup.ts';
import type { CubeCell } from '../cube/types.ts';
import type { Series } from '../model/report.ts';
import { segmentAxis, segmentText } from '../segment-map.ts';
import { benjaminiHochberg } from '../stats/bh.ts';
import { bestChangePoint } from '../stats/changepoint.ts';
import { countBalance } from '../stats/balance.ts';
import { balanceBiasBound, rewardScale } from '../stats/balance-bias.ts';
import { ips } from '../stats/estimators.ts';
import type { Probability } from '../targets/analysis.ts';
import { bucketWindow, describeSegment, finite, fmt, notListed, result, segmentRecord, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { and, segmentPredicate, windowPredicate } from './predicates.ts';
import { countText as n_, counted } from '../count-words.ts';

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
  /** indexes (ascending) of the cells of the test's group, all actions */
  readonly members: readonly number[];
}

/**
 * Per cube cell i, the actions whose balance tests leave the rows of i's full segment (all segment columns)
 * out: actions never logged in the segment (support information, not a test), and actions logged there with
 * a propensity below the floor somewhere in the log. Where the action's propensity drops below ε, a few rare
 * huge weights carry B: a group that happens to hold none of them reads B ≈ 1 − (their share) although the
 * propensities are right, and one that holds one reads far above 1. So those segments are set aside from
 * the action's tests (every other row of every group is still tested), listed, and the check warns.
 */
interface Outside {
  /** cell i's full segment, as an index into `neverIn` / `lowIn` */
  readonly segmentOf: (i: number) => number;
  /** per full segment: actions never logged there, and actions below the floor there (in `actions` order) */
  readonly neverIn: readonly (readonly string[])[];
  readonly lowIn: readonly (readonly string[])[];
  /** the action is below the floor in cell i's full segment */
  readonly isLow: (i: number, action: string) => boolean;
  /** the rows of cell i are outside the tests of `action` */
  readonly of: (i: number, action: string) => boolean;
  /** per action, the segments set aside (cell indexes of their first cell) */
  readonly setAside: ReadonlyMap<string, readonly number[]>;
}

function outsideOf(cells: readonly CubeCell[], segmentKeyOf: (c: CubeCell) => string, actions: readonly string[], floor: number): Outside {
  // segments by index, so every per-cell lookup below is an array read or a set membership (a 10^4-action log
  // has 10^4 cells and as many actions in one segment's lists: nothing here may cost cells × actions)
  const index = new Map<string, number>();
  const first: number[] = [];
  const logged: Set<string>[] = [];
  const low: Set<string>[] = [];
  const segmentOf = new Int32Array(cells.length);
  cells.forEach((c, i) => {
    const k = segmentKeyOf(c);
    let s = index.get(k);
    if (s === undefined) {
      index.set(k, (s = first.length));
      first.push(i);
      logged.push(new Set());
      low.push(new Set());
    }
    segmentOf[i] = s;
    if (c.nP > 0) (logged[s] as Set<string>).add(c.action);
    if (c.minP !== null && c.minP < floor) (low[s] as Set<string>).add(c.action);
  });
  const neverIn = logged.map((set) => actions.filter((a) => !set.has(a)));
  const neverSet = neverIn.map((list) => new Set(list));
  const lowIn = low.map((set) => (set.size ? actions.filter((a) => set.has(a)) : []));
  const setAside = new Map<string, number[]>();
  lowIn.forEach((list, s) => {
    for (const a of list) {
      let firsts = setAside.get(a);
      if (!firsts) setAside.set(a, (firsts = []));
      firsts.push(first[s] as number);
    }
  });
  const isLow = (i: number, action: string) => (low[segmentOf[i] as number] as Set<string>).has(action);
  return {
    segmentOf: (i) => segmentOf[i] as number,
    neverIn,
    lowIn,
    isLow,
    of: (i, action) => (neverSet[segmentOf[i] as number] as Set<string>).has(action) || isLow(i, action),
    setAside,
  };
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

/** One primary target's bias budget: its IPS standard error and the tolerance derived from it. */
interface Budget {
  readonly name: string;
  readonly q: Probability | null;
  readonly se: number | null;
  /** min(balance.max_bias_se · SE, support.target.fail · R): the bias a deviation may put into the estimate */
  readonly tolerance: number;
}

/** What a significant deviation is weighed against: R bounds |r|, one budget per primary target. */
interface Materiality {
  readonly scale: number | null;
  readonly budgets: readonly Budget[];
  /** valid-propensity rows of the whole log (the mass's denominator) */
  readonly rows: number;
}

export interface Assessment {
  readonly bias: number;
  readonly tolerance: number;
  readonly target: string;
}

function materialityOf(ctx: AuditContext, cells: readonly CubeCell[]): Materiality {
  const reward = ctx.roles.reward ? ctx.profile.columns.find((c) => c.name === ctx.roles.reward) : undefined;
  const scale = reward?.kind === 'boolean' ? 1 : rewardScale(reward?.min ?? null, reward?.max ?? null);
  const rewarded = cells.reduce((s, c) => s + c.nRw, 0);
  const rows = cells.reduce((s, c) => s + c.nP, 0);
  const k = ctx.settings['balance.max_bias_se'];
  const share = ctx.settings['support.target.fail'];
  const budgets = scale === null ? [] : ctx.primaryTargets.map((t): Budget => {
    let se: number | null = null;
    try {
      se = ips(t.estimatorCells, rewarded).se;
    } catch {
      se = null;
    }
    const budget = share * scale;
    return { name: t.target.name, q: t.q, se, tolerance: se !== null && Number.isFinite(se) ? Math.min(k * se, budget) : budget };
  });
  return { scale, budgets, rows };
}

/**
 * The bias bound of a deviation B of `action` over the cells `members` (those `skip` marks left out) for each
 * primary target, relative to its tolerance; the target with the largest ratio. Null when there is nothing to
 * weigh against (no reward scale or no primary target): significance alone decides then.
 */
function assess(m: Materiality, cells: readonly CubeCell[], members: readonly number[], action: string, balance: number, outside: Outside, skip?: Uint8Array): Assessment | null {
  if (m.scale === null || m.budgets.length === 0 || m.rows === 0) return null;
  let worst: Assessment | null = null;
  let worstRatio = -1;
  for (const b of m.budgets) {
    let mass = 0;
    if (b.q) {
      for (const i of members) {
        if (skip?.[i] || outside.of(i, action)) continue;
        const c = cells[i] as CubeCell;
        mass += c.nP * (b.q(c.segment, action) ?? 0);
      }
    } else {
      // a target column gives q on the logged action's rows only: π̄ ≈ Σ q/p ÷ Σ 1/p over them (a ratio free of B)
      let rows = 0, sw = 0, s1 = 0;
      for (const i of members) {
        if (skip?.[i] || outside.of(i, action)) continue;
        const c = cells[i] as CubeCell;
        rows += c.nP;
        if (c.action !== action) continue;
        sw += c.target?.sumW ?? 0;
        s1 += c.sumInvP;
      }
      mass = s1 > 0 ? (rows * sw) / s1 : 0;
    }
    const bias = balanceBiasBound(balance, mass / m.rows, m.scale);
    const ratio = b.tolerance > 0 ? bias / b.tolerance : bias > 0 ? Infinity : 0;
    if (ratio > worstRatio) {
      worstRatio = ratio;
      worst = { bias, tolerance: b.tolerance, target: b.name };
    }
  }
  return worst;
}

/** A significant deviation matters where its bias bound exceeds the tolerance of some primary target. */
const material = (a: Assessment | null): boolean => a === null || a.bias > a.tolerance;

/**
 * A test's group as failsWithout and assess read it, column by column: the cells outside the test's action's
 * support dropped once, and each remaining cell's terms (nP, the action's Σ1/p and Σ1/p², nP·q per budget, the
 * target column's Σw) read once, in member order. Summing these arrays over the cells not left out adds the same
 * doubles in the same order as the plain loops over `members` do, so every sum is the same bit for bit.
 */
interface Packed {
  readonly index: Int32Array;
  readonly nP: Float64Array;
  /** the cell's logged action is the test's */
  readonly own: Uint8Array;
  readonly s1: Float64Array;
  readonly s2: Float64Array;
  /** per budget: nP · q(segment, action) for a target with q, null for a target column */
  readonly mass: readonly (Float64Array | null)[];
  /** the target column's Σw on the test's action's cells (0 elsewhere) */
  readonly sw: Float64Array;
}

/** failsWithout and assess over packed groups (the fast path of smallestCauses and explainAway). */
interface PackedTests {
  readonly assess: (t: Test, balance: number, skip?: Uint8Array) => Assessment | null;
  /** failsWithout over packed groups, for the p cut of the failing tests */
  readonly fails: (pCut: number) => FailsWithout;
  /** the cells of the test's group inside its action's support (packed once per test) */
  readonly packedOf: (t: Test) => Packed;
}

/** Cells × actions (× budgets) the packed cause search keeps per-action reads for, at most (8 bytes each). */
const CACHE_CELLS = 4_000_000;

function packedTests(m: Materiality, cells: readonly CubeCell[], outside: Outside, minExpected: number): PackedTests {
  const packs = new Map<Test, Packed>();
  const qs = m.budgets.map((b) => b.q);
  // A cell lies in about ten tested groups (one per scope) with each action: per action, whether each cell is
  // outside its support (0 not read yet, 1 inside, 2 outside) and each budget's q there (NaN: not read yet), read
  // once. The arrays stop being made past CACHE_CELLS entries (a log of 10^4 actions), and q is then read each time.
  const perAction = new Map<string, { outside: Uint8Array; q: (Float64Array | null)[] } | null>();
  let cached = 0;
  const readsOf = (action: string) => {
    let r = perAction.get(action);
    if (r === undefined) {
      const q = qs.map((f) => (f ? new Float64Array(cells.length).fill(NaN) : null));
      const entries = cells.length * (1 + q.filter(Boolean).length);
      r = cached + entries <= CACHE_CELLS ? { outside: new Uint8Array(cells.length), q } : null;
      if (r) cached += entries;
      perAction.set(action, r);
    }
    return r;
  };
  const packedOf = (t: Test): Packed => {
    let p = packs.get(t);
    if (p) return p;
    const { members, action } = t;
    const size = members.length;
    const index = new Int32Array(size), nP = new Float64Array(size), own = new Uint8Array(size), s1 = new Float64Array(size), s2 = new Float64Array(size), sw = new Float64Array(size);
    const mass = qs.map((q) => (q ? new Float64Array(size) : null));
    const reads = readsOf(action);
    let len = 0;
    for (const i of members) {
      if (reads) {
        let o = reads.outside[i] as number;
        if (o === 0) reads.outside[i] = o = outside.of(i, action) ? 2 : 1;
        if (o === 2) continue;
      } else if (outside.of(i, action)) continue;
      const c = cells[i] as CubeCell;
      index[len] = i;
      nP[len] = c.nP;
      if (c.action === action) {
        own[len] = 1;
        s1[len] = c.sumInvP;
        s2[len] = c.sumInvP2;
        sw[len] = c.target?.sumW ?? 0;
      }
      for (let k = 0; k < qs.length; k++) {
        const q = qs[k];
        if (!q) continue;
        const known = reads?.q[k];
        let v = known ? (known[i] as number) : NaN;
        if (Number.isNaN(v)) {
          v = q(c.segment, action) ?? 0;
          if (known) known[i] = v;
        }
        (mass[k] as Float64Array)[len] = c.nP * v;
      }
      len++;
    }
    packs.set(t, (p = { index: index.subarray(0, len), nP, own, s1, s2, mass, sw }));
    return p;
  };
  const assessPacked = (t: Test, balance: number, skip?: Uint8Array): Assessment | null => {
    if (m.scale === null || m.budgets.length === 0 || m.rows === 0) return null;
    const p = packedOf(t);
    const len = p.index.length;
    let worst: Assessment | null = null;
    let worstRatio = -1;
    for (let k = 0; k < m.budgets.length; k++) {
      const b = m.budgets[k] as Budget;
      let mass = 0;
      const terms = p.mass[k];
      if (terms) {
        for (let j = 0; j < len; j++) if (!skip?.[p.index[j] as number]) mass += terms[j] as number;
      } else {
        let rows = 0, sw = 0, s1 = 0;
        for (let j = 0; j < len; j++) {
          if (skip?.[p.index[j] as number]) continue;
          rows += p.nP[j] as number;
          if (!p.own[j]) continue;
          sw += p.sw[j] as number;
          s1 += p.s1[j] as number;
        }
        mass = s1 > 0 ? (rows * sw) / s1 : 0;
      }
      const bias = balanceBiasBound(balance, mass / m.rows, m.scale as number);
      const ratio = b.tolerance > 0 ? bias / b.tolerance : bias > 0 ? Infinity : 0;
      if (ratio > worstRatio) {
        worstRatio = ratio;
        worst = { bias, tolerance: b.tolerance, target: b.name };
      }
    }
    return worst;
  };
  const fails = (pCut: number): FailsWithout => (t, removed) => {
    const p = packedOf(t);
    const len = p.index.length;
    let nP = 0, k = 0, s1 = 0, s2 = 0;
    for (let j = 0; j < len; j++) {
      if (removed[p.index[j] as number]) continue;
      nP += p.nP[j] as number;
      if (p.own[j]) {
        k += p.nP[j] as number;
        s1 += p.s1[j] as number;
        s2 += p.s2[j] as number;
      }
    }
    if (nP < 2 || k === 0) return false;
    const wb = countBalance(nP, k, s1, s2, minExpected);
    return wb.pValue <= pCut && material(assessPacked(t, wb.balance, removed));
  };
  return { assess: assessPacked, fails, packedOf };
}

/**
 * Groups rows, then for every action a logged in the group: B = (1/n) Σ 1[a_i = a]/p_i (E[B] = 1), tested
 * by countBalance (exact binomial below `minExpected` expected events, normal above). Actions not logged
 * in the group go to `never`. `key` names a cell's group (null: in none); `meta` describes a group from its first cell.
 */
function testsFor(scope: Test['scope'], cells: readonly CubeCell[], minExpected: number, key: (c: CubeCell, i: number) => string | null, meta: (c: CubeCell) => GroupMeta, actions: readonly string[], outside: Outside, never: NeverLogged[]): Test[] {
  const groups = new Map<string, { meta: GroupMeta; nP: number; outside: Map<string, number>; aside: Set<string>; bySegment: Map<number, number>; byAction: Map<string, { c: number; s1: number; s2: number }>; members: number[] }>();
  cells.forEach((c, i) => {
    const k = key(c, i);
    if (k === null) return;
    let e = groups.get(k);
    if (!e) groups.set(k, (e = { meta: meta(c), nP: 0, outside: new Map(), aside: new Set(), bySegment: new Map(), byAction: new Map(), members: [] }));
    e.members.push(i);
    e.nP += c.nP;
    const s = outside.segmentOf(i);
    e.bySegment.set(s, (e.bySegment.get(s) ?? 0) + c.nP);
    if (outside.isLow(i, c.action)) return;
    let a = e.byAction.get(c.action);
    if (!a) e.byAction.set(c.action, (a = { c: 0, s1: 0, s2: 0 }));
    a.c += c.nP;
    a.s1 += c.sumInvP;
    a.s2 += c.sumInvP2;
  });
  // rows outside each action's support, once per (group, full segment) rather than once per cell
  for (const e of groups.values()) {
    for (const [s, rows] of e.bySegment) {
      for (const a of outside.neverIn[s] as readonly string[]) e.outside.set(a, (e.outside.get(a) ?? 0) + rows);
      for (const a of outside.lowIn[s] as readonly string[]) {
        e.outside.set(a, (e.outside.get(a) ?? 0) + rows);
        e.aside.add(a);
      }
    }
  }
  const out: Test[] = [];
  for (const e of groups.values()) {
    const where = { segment: e.meta.segment, ...(e.meta.bucket !== undefined ? { bucket: e.meta.bucket } : {}), ...(e.meta.version !== undefined ? { version: e.meta.version } : {}) };
    for (const action of actions) {
      const s = e.byAction.get(action);
      // rows of segments where the action was never logged are outside its support: not part of its test
      const n = e.nP - (e.outside.get(action) ?? 0);
      if (!s || s.c === 0) {
        // logged only where it is set aside (below the floor): listed as set aside, neither tested nor never logged
        if (e.aside.has(action) && n === 0) continue;
        if (n === e.nP || scope === 'segment' || scope === 'segment value') never.push({ scope, ...where, action, n: e.nP });
        continue;
      }
      if (n < 2) continue;
      const wb = countBalance(n, s.c, s.s1, s.s2, minExpected);
      out.push({ scope, ...where, action, n, balance: wb.balance, se: wb.se, z: wb.z, p: wb.pValue, count: s.c, expected: wb.expected, method: wb.method, members: e.members });
    }
  }
  return out;
}

/**
 * balance.weights: the weight-balance identity E[1{A=a}/p] = 1 per action, segment, time bucket and version, with BH.
 * `plain` reads every test's group cell by cell (failsWithout, assess) and weighs every cause candidate on its
 * own: the straightforward definition, which test/core/pure-speed-equivalence.test.ts holds the fast path
 * (packed groups, candidates of one group weighed once, tests the candidate does not touch not re-tested) equal to.
 */
export function checkBalance(ctx: AuditContext, plain = false): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('balance.weights', 'the propensity, action or reward role is missing');
  const cols = ctx.segmentColumns;
  const actions = ctx.view.actions;
  const cells = ctx.cells.filter((c) => c.action !== '(null)');
  const floor = ctx.settings['support.floor.epsilon'];
  const minExpected = ctx.settings['balance.min_expected'];
  const never: NeverLogged[] = [];
  const outside = outsideOf(cells, ctx.view.segmentKeyOf, actions, floor);
  const tests: Test[] = [
    ...testsFor('action', cells, minExpected, () => 'all', () => ({ segment: {} }), actions, outside, never),
    ...cols.flatMap((col, j) => testsFor('segment value', cells, minExpected, (c) => c.segment[j] as string, (c) => ({ segment: { [col]: c.segment[j] as string } }), actions, outside, never)),
    ...(cols.length > 1 ? testsFor('segment', cells, minExpected, ctx.view.segmentKeyOf, (c) => ({ segment: segmentRecord(cols, c.segment) }), actions, outside, never) : []),
    ...(ctx.buckets ? testsFor('time bucket', cells, minExpected, (c) => (c.bucket < 0 ? null : String(c.bucket)), (c) => ({ segment: {}, bucket: c.bucket }), actions, outside, never) : []),
    ...(ctx.roles.policy_version
      ? [
        // action × version over every segment: a defect of one version everywhere is one group, not one per segment value
        ...testsFor('policy version', cells, minExpected, (c) => c.version, (c) => ({ segment: {}, version: c.version }), actions, outside, never),
        ...cols.flatMap((col, j) => {
          const key = pairKeys((v, version) => `${v}${SEP}${version}`);
          return testsFor('policy version', cells, minExpected, (c) => key(c.segment[j] as string, c.version), (c) => ({ segment: { [col]: c.segment[j] as string }, version: c.version }), actions, outside, never);
        }),
      ]
      : []),
  ];
  const q = ctx.settings['balance.q'];
  const materiality = materialityOf(ctx, cells);
  const tested = tests;
  const bh = benjaminiHochberg(tested.map((t) => t.p), q);
  const rejected = tested
    .map((t, i) => ({ t, adj: bh.adjusted[i] as number, rejected: bh.rejected[i] as boolean }))
    .filter((x) => x.rejected);
  const weigh = (members: readonly number[], action: string, balance: number, covered: Uint8Array) => material(assess(materiality, cells, members, action, balance, outside, covered));
  let significant: (typeof rejected[number] & { bias: Assessment | null })[];
  let fails: FailsWithout;
  const fast = plain ? null : packedTests(materiality, cells, outside, minExpected);
  if (fast) {
    significant = rejected.map((x) => ({ ...x, bias: fast.assess(x.t, x.t.balance) })).filter((x) => material(x.bias));
    fails = fast.fails(Math.max(0, ...significant.map((x) => x.t.p)));
  } else {
    significant = rejected.map((x) => ({ ...x, bias: assess(materiality, cells, x.t.members, x.t.action, x.t.balance, outside) })).filter((x) => material(x.bias));
    fails = failsWithout(cells, outside, weigh, Math.max(0, ...significant.map((x) => x.t.p)), minExpected);
  }
  const causes = smallestCauses(significant, cells, fails, fast);
  const flagged = [...causes.chosen, ...explainAway(causes.rest, causes.removed, fails)];
  const versionWindows = versionSpans(ctx);
  const findings: DraftFinding[] = flagged.slice(0, MAX_FINDINGS).map(({ t, adj, bias }) => {
    const accounts = causes.accounts.get(t);
    const episode = accounts !== undefined && ctx.buckets ? changeWindow(t, cells, outside) : null;
    const win = t.bucket !== undefined && ctx.buckets ? bucketWindow(ctx.buckets, t.bucket, t.bucket + 1) : episode && ctx.buckets ? bucketWindow(ctx.buckets, episode[0], episode[1] + 1) : t.version !== undefined ? versionWindows.get(t.version) : undefined;
    const segPred = segmentPredicate(ctx.rows!, cols, t.segment);
    const where = and(segPred, t.bucket !== undefined ? windowPredicate(ctx.rows!, ctx.buckets, t.bucket, t.bucket) : undefined, t.version !== undefined && ctx.rows!.version ? `${ctx.rows!.version} = ${ctx.rows!.dialect.literal(t.version)}` : undefined, `${ctx.rows!.action} = ${ctx.rows!.dialect.literal(t.action)}`);
    const scope = [describeSegment(t.segment), t.version !== undefined ? `policy ${t.version}` : '', win && t.bucket !== undefined ? `${win.from}` : '', win && episode ? `from ${win.from.slice(0, 10)} to ${win.to.slice(0, 10)}` : ''].filter(Boolean).join(', ');
    const accountNote = accounts !== undefined ? `; leaving this group's rows out explains ${n_(accounts)} of the ${n_(significant.length)} failing tests` : '';
    return {
      segment: t.segment,
      action: t.action,
      ...(win ? { window: win } : {}),
      status: 'fail' as const,
      metrics: { scope: t.scope, balance: t.balance, se: t.se, z: Number.isFinite(t.z) ? t.z : null, p_adjusted: adj, rows: t.n, logged: t.count, expected: t.expected, test: t.method, bias_bound: bias?.bias ?? null, bias_tolerance: bias?.tolerance ?? null, bias_target: bias?.target ?? null, ...(t.version !== undefined ? { version: t.version } : {}), ...(accounts !== undefined ? { accounts_for: accounts } : {}) },
      message: `${t.action} in ${scope}: B = ${fmt(t.balance)} (expected 1; logged ${n_(t.count)} times where the logged propensities lead one to expect ${fmt(t.expected)}; ${t.method} test, z = ${Number.isFinite(t.z) ? t.z.toFixed(1) : t.z > 0 ? '+∞' : '−∞'}, BH-adjusted p = ${fmt(adj, 2)}${accountNote}${bias ? `; it could bias ${bias.target}'s estimate by up to ${fmt(bias.bias)}, above the ${fmt(bias.tolerance)} it tolerates` : ''}) — ${t.balance < 1 ? 'the action is logged less often than its propensities claim, or is not supported everywhere' : 'the action is logged more often than its propensities claim'}`,
      ...(where ? { where } : {}),
    };
  });
  let nP = 0, s1 = 0;
  for (const c of cells) {
    nP += c.nP;
    s1 += c.sumInvP;
  }
  const meanInvP = nP > 0 ? s1 / nP : null;
  const aside = setAsideFindings(outside.setAside, cells, ctx.view.segmentKeyOf, cols, floor);
  findings.push(...aside.findings);
  const status = flagged.length ? 'fail' : aside.segments ? 'warn' : 'pass';
  const overall = tests.filter((t) => t.scope === 'action');
  const neverSegments = never.filter((x) => x.scope === (cols.length > 1 ? 'segment' : 'segment value'));
  const neverNote = neverSegments.length ? ` ${counted(neverSegments.length, 'segment × action cell')} ${neverSegments.length === 1 ? 'was' : 'were'} never logged: support information (support.target weighs them against each target), not a balance test.` : '';
  const left = notListed(Math.max(0, flagged.length - MAX_FINDINGS), MAX_FINDINGS, 'explaining groups');
  const leftNote = aside.segments ? ` ${counted(aside.segments, 'segment × action pair')} (${counted(aside.rows, 'row')}) set aside from their action's tests, where the action's propensity falls below ε = ${floor}.` : '';
  const summary = flagged.length
    ? `${n_(significant.length)} of ${n_(tested.length)} balance tests fail (BH q = ${q}, ${ruleText(materiality, ctx.settings['balance.max_bias_se'], ctx.settings['support.target.fail'])}), explained by ${counted(flagged.length, 'group')}; worst: ${findings[0]?.message.split(' — ')[0] ?? ''}.${leftNote}${neverNote}${left.note}`
    : `${significantOnly(bh.rejected.filter(Boolean).length, tested.length)} (BH q = ${q}, ${ruleText(materiality, ctx.settings['balance.max_bias_se'], ctx.settings['support.target.fail'])}); mean 1/p = ${fmt(meanInvP)} for ${actions.length} actions.${leftNote}${neverNote}`;
  return result(
    'balance.weights',
    status,
    summary,
    { tests: tested.length, set_aside: aside.segments, set_aside_rows: aside.rows, exact_tests: tested.filter((t) => t.method === 'exact binomial').length, never_logged: never.length, significant: bh.rejected.filter(Boolean).length, failing: significant.length, groups: flagged.length, mean_inverse_propensity: meanInvP, actions: actions.length, reward_scale: materiality.scale, ...left.metrics },
    findings,
    ['balance.q', 'balance.max_bias_se', 'balance.min_expected', 'support.floor.epsilon', 'support.target.fail'],
    [
      { name: 'balance B by action', kind: 'bars', x: overall.map((t) => t.action), values: [overall.map((t) => t.balance)], labels: ['B'], unit: 'B (expected 1)' },
      balanceHeatmap(tests.filter((t) => t.scope === (cols.length > 1 ? 'segment' : 'segment value')), neverSegments, [...outside.setAside].flatMap(([action, firsts]) => firsts.map((i) => ({ action, segment: segmentRecord(cols, (cells[i] as CubeCell).segment) }))), cols, actions),
    ],
  );
}

/** Whether a test still fails with the marked cells left out of its group (false when too few rows remain). */
type FailsWithout = (t: Test, removed: Uint8Array) => boolean;

/** A failing test fails on significance (p at most the BH cut) and on its bias bound (`weigh`), as in checkBalance. */
function failsWithout(cells: readonly CubeCell[], outside: Outside, weigh: (members: readonly number[], action: string, balance: number, covered: Uint8Array) => boolean, pCut: number, minExpected: number): FailsWithout {
  return (t, removed) => {
    let nP = 0, k = 0, s1 = 0, s2 = 0;
    for (const i of t.members) {
      if (removed[i]) continue;
      if (outside.of(i, t.action)) continue;
      const c = cells[i] as CubeCell;
      nP += c.nP;
      if (c.action === t.action) {
        k += c.nP;
        s1 += c.sumInvP;
        s2 += c.sumInvP2;
      }
    }
    if (nP < 2 || k === 0) return false;
    const wb = countBalance(nP, k, s1, s2, minExpected);
    return wb.pValue <= pCut && weigh(t.members, t.action, wb.balance, removed);
  };
}

/** Scopes a cause is named in: one segment value × action, or one action under one policy version, in every segment or in one segment value. */
const CAUSE_SCOPES: ReadonlySet<Test['scope']> = new Set(['segment value', 'policy version']);
/** Bounds the search: candidates × the cells read per candidate (every failing test's group once). */
const CAUSE_WORK = 20_000_000;
const MAX_CAUSE_CANDIDATES = 48;

/**
 * The smallest groups that account for the failing tests: greedily, the segment value × action (× version)
 * or action × version (every segment) group whose rows, left out, make the most still-unexplained failing
 * tests hold, so a defect of one version everywhere is one group however many segment values share it. Ties go
 * to the group with fewer rows not yet accounted for (so riverside under v8 wins over riverside, which explains
 * the same tests with more rows), then to the wider group (once a version's rows everywhere are accounted for,
 * riverside and riverside under the other version name the same new rows, and riverside says it with fewer
 * restrictions), then to the larger deviation (so between two actions of one group, to the larger deviation). A
 * group must account for more than its own test. What no such group explains is returned in `rest`, with the
 * cells already accounted for in `removed`.
 */
function smallestCauses<T extends { t: Test }>(failing: readonly T[], cells: readonly CubeCell[], fails: FailsWithout, fast: PackedTests | null): { chosen: T[]; accounts: Map<Test, number>; rest: T[]; removed: Uint8Array } {
  const removed = new Uint8Array(cells.length);
  const work = failing.reduce((s, x) => s + x.t.members.length, 0);
  const limit = Math.min(MAX_CAUSE_CANDIDATES, Math.floor(CAUSE_WORK / Math.max(1, work)));
  const candidates = failing.filter((x) => CAUSE_SCOPES.has(x.t.scope)).sort((a, b) => Math.abs(b.t.z) - Math.abs(a.t.z) || b.t.n - a.t.n).slice(0, limit);
  // rows of a test's group, every action (so the actions of one group tie on rows), and those no chosen group accounts for yet
  const rowsOf = (t: Test, skip?: Uint8Array): number => {
    let rows = 0;
    for (const i of t.members) if (!skip?.[i]) rows += (cells[i] as CubeCell).nP;
    return rows;
  };
  const chosen: T[] = [];
  const accounts = new Map<Test, number>();
  let open = [...failing];
  for (;;) {
    let best: { x: T; explains: Set<T>; left: number; all: number } | null = null;
    // fast path: candidates of one group (one members array, one per action) leave the same cells out, so they
    // explain the same tests; a test none of whose cells a candidate newly leaves out fares as with `removed` alone
    const byGroup = new Map<readonly number[], Set<T>>();
    const asNow = new Map<T, boolean>();
    for (const x of candidates) {
      if (chosen.includes(x)) continue;
      let explains = fast ? byGroup.get(x.t.members) : undefined;
      if (!explains) {
        const mark = removed.slice();
        for (const i of x.t.members) mark[i] = 1;
        const still = fast
          ? (y: T): boolean => {
            if (!touches(fast.packedOf(y.t).index, mark, removed)) {
              let f = asNow.get(y);
              if (f === undefined) asNow.set(y, (f = fails(y.t, removed)));
              return f;
            }
            return fails(y.t, mark);
          }
          : (y: T): boolean => fails(y.t, mark);
        explains = new Set(open.filter((y) => !still(y)));
        if (fast) byGroup.set(x.t.members, explains);
      }
      if (explains.size < 2) continue;
      const left = rowsOf(x.t, removed), all = rowsOf(x.t);
      // two actions of one group tie on both row counts, so the larger deviation wins between them
      const deviates = best !== null && Math.abs(x.t.balance - 1) > Math.abs(best.x.t.balance - 1);
      const better = !best || explains.size > best.explains.size || (explains.size === best.explains.size && (left < best.left || (left === best.left && (all > best.all || (all === best.all && deviates)))));
      if (better) best = { x, explains, left, all };
    }
    if (!best) break;
    chosen.push(best.x);
    accounts.set(best.x.t, best.explains.size);
    for (const i of best.x.t.members) removed[i] = 1;
    open = open.filter((y) => !best!.explains.has(y));
  }
  return { chosen, accounts, rest: open, removed };
}

/** Whether `mark` leaves out one of the cells `index` that `removed` does not. */
function touches(index: Int32Array, mark: Uint8Array, removed: Uint8Array): boolean {
  for (let j = 0; j < index.length; j++) {
    const i = index[j] as number;
    if (mark[i] && !removed[i]) return true;
  }
  return false;
}

/**
 * Where a cause's deviation starts and ends, in time buckets: the least-squares change point of 1{A=a}/p over
 * the group's buckets (bestChangePoint) cuts off the side nearer 1 when it lies within a quarter of the other
 * side's distance from 1 (so noise inside a steady episode cuts nothing), and once more inside what is left.
 */
function changeWindow(t: Test, cells: readonly CubeCell[], outside: Outside): [number, number] | null {
  const byBucket = new Map<number, { n: number; sum: number; sumSq: number }>();
  for (const i of t.members) {
    const c = cells[i] as CubeCell;
    if (c.bucket < 0 || outside.of(i, t.action)) continue;
    const g = byBucket.get(c.bucket) ?? { n: 0, sum: 0, sumSq: 0 };
    g.n += c.nP;
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

/** The failing rule in words, for the summary. */
function ruleText(m: Materiality, k: number, share: number): string {
  if (m.scale === null) return 'the reward gives no scale, so significance alone decides';
  if (m.budgets.length === 0) return 'no primary target to weigh a deviation against, so significance alone decides';
  return `failing where |B − 1| · target mass · R (R = ${fmt(m.scale)}) exceeds min(${k} SE, ${share} R) of a primary target's IPS estimate`;
}

const significantOnly = (n: number, tests: number): string => (n ? `None of ${tests} balance tests fails: ${n} deviate significantly, each too little to bias a primary target's estimate beyond its tolerance` : `All ${tests} balance tests hold`);

/**
 * One warning per action naming the segments set aside from its balance tests because its propensity falls
 * below the floor there (support.floor reports those cells), with the rows set aside.
 */
function setAsideFindings(setAside: ReadonlyMap<string, readonly number[]>, cells: readonly CubeCell[], segmentKeyOf: (c: CubeCell) => string, cols: readonly string[], floor: number): { findings: DraftFinding[]; segments: number; rows: number } {
  const rowsOf = new Map<string, number>();
  for (const c of cells) rowsOf.set(segmentKeyOf(c), (rowsOf.get(segmentKeyOf(c)) ?? 0) + c.nP);
  let segments = 0, total = 0;
  const findings = [...setAside].map(([action, firsts]): DraftFinding => {
    const segs = firsts.map((i) => cells[i] as CubeCell);
    const rows = segs.reduce((s, c) => s + (rowsOf.get(segmentKeyOf(c)) ?? 0), 0);
    segments += segs.length;
    total += rows;
    const names = segs.map((c) => describeSegment(segmentRecord(cols, c.segment)));
    const shown = names.slice(0, MAX_LISTED).join('; ') + (names.length > MAX_LISTED ? `; and ${names.length - MAX_LISTED} more` : '');
    return {
      segment: segs.length === 1 ? segmentRecord(cols, (segs[0] as CubeCell).segment) : {},
      action,
      status: 'warn' as const,
      metrics: { set_aside: segs.length, set_aside_rows: rows },
      message: `${counted(segs.length, 'segment')}, ${counted(rows, 'row')}, set aside from the balance tests of ${action}, because its propensity falls below ε = ${floor} there (a few rare huge weights carry B there, so B says little either way; support.floor lists the cells): ${shown}`,
    };
  });
  return { findings, segments, rows: total };
}

/**
 * z by segment × action. Cells without a z are null, with the reason beside them in `null_reasons`: an
 * action never logged in the segment (support information), or a segment too small to test.
 */
function balanceHeatmap(tests: readonly Test[], never: readonly NeverLogged[], aside: readonly { segment: Record<string, string>; action: string }[], cols: readonly string[], actions: readonly string[]): Series {
  const parts = (s: Record<string, string>) => cols.filter((c) => s[c] !== undefined).map((c) => ({ column: c, value: s[c] as string }));
  const label = (s: Record<string, string>) => segmentText(parts(s));
  const { labels: segs, keys } = segmentAxis('y', [...tests, ...never, ...aside].map((t) => parts(t.segment)));
  const idx = new Map(tests.map((t) => [`${label(t.segment)}|${t.action}`, finite(t.z)]));
  const unlogged = new Set(never.map((t) => `${label(t.segment)}|${t.action}`));
  const below = new Set(aside.map((t) => `${label(t.segment)}|${t.action}`));
  const reason = (k: string) => (unlogged.has(k) ? 'never logged' : below.has(k) ? 'below ε' : 'not tested');
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

export const balanceWeights: CheckDefinition<'balance.weights'> = defineCheck('balance.weights', {
  title: 'Weight balance', blocking: true, panel: 'weights', remedies: ['plan'],
  settings: ['balance.q', 'balance.max_bias_se', 'balance.min_expected', 'support.floor.epsilon', 'support.target.fail'],
}, (ctx) => checkBalance(ctx));
