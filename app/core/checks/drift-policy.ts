import { defineCheck, type CheckDefinition } from './define.ts';
import type { CubeCell } from '../cube/types.ts';
import type { Series } from '../model/report.ts';
import { countBalance } from '../stats/balance.ts';
import { benjaminiHochberg } from '../stats/bh.ts';
import { chiSquareHomogeneity } from '../stats/chisq.ts';
import { populationStabilityIndex } from '../stats/psi.ts';
import { bucketWindow, describeSegment, fmt, isoUs, result, skipped, type AuditContext, type DraftFinding } from './context.ts';
import { segmentPredicate } from './predicates.ts';
import { explorationBySegment } from './propensity-exploration.ts';
import { counted } from '../count-words.ts';

const MIN_BUCKET_ROWS = 10;
const MIN_WINDOW_ROWS = 50;
/** A shift smaller than this PSI is not reported even when significant (0.1 band: common practice). */
const PSI_NOTICE = 0.1;

interface Group {
  segment: Record<string, string>;
  /** the segment column the group takes one value of (null: every row) */
  column: number | null;
  counts: number[][]; // bucket × action
  first: Window;
  last: Window;
}

interface Window {
  /** actions with a propensity below the floor anywhere in the group's log: their rare huge weights make B and its
   * standard error unreliable in a window that happens to hold none of them (support.floor reports them) */
  lowFloor: Set<number>;
  nP: number;
  /** valid-propensity rows of each action (the count the balance test compares with its expectation) */
  logged: number[];
  s1: number[];
  s2: number[];
  counts: number[];
  versions: Map<string, number>;
}

export interface VersionSwitch {
  readonly from: string;
  readonly to: string;
  readonly at: string;
  readonly bucket: number;
}

/** Dominant policy version per bucket, and where it changes. */
export function versionSwitches(ctx: AuditContext): VersionSwitch[] {
  const b = ctx.buckets;
  if (!b || !ctx.roles.policy_version) return [];
  const per = Array.from({ length: b.count }, () => new Map<string, number>());
  for (const c of ctx.cells) if (c.bucket >= 0 && c.bucket < b.count) per[c.bucket]!.set(c.version, (per[c.bucket]!.get(c.version) ?? 0) + c.n);
  const dominant = per.map((m) => [...m.entries()].sort((x, y) => y[1] - x[1] || x[0].localeCompare(y[0]))[0]?.[0] ?? null);
  const out: VersionSwitch[] = [];
  let prev: string | null = null;
  dominant.forEach((v, i) => {
    if (v === null) return;
    if (prev !== null && v !== prev) {
      const m = per[i]!;
      const mixed = (m.get(prev) ?? 0) > 0;
      out.push({ from: prev, to: v, bucket: i, at: isoUs(b.originUs + i * b.widthUs) + (mixed ? ' (during this bucket)' : '') });
    }
    prev = v;
  });
  return out;
}

/** A series' marks at each version switch: the bucket's x (as the series label it) and "v7 → v8". */
export function switchMarks(switches: readonly VersionSwitch[], b: { readonly originUs: number; readonly widthUs: number }): NonNullable<Series['marks']> {
  return switches.map((s) => ({ x: isoUs(b.originUs + s.bucket * b.widthUs), kind: 'policy-switch' as const, label: `${s.from} → ${s.to}` }));
}

function emptyWindow(k: number): Window {
  return { lowFloor: new Set(), nP: 0, logged: new Array(k).fill(0), s1: new Array(k).fill(0), s2: new Array(k).fill(0), counts: new Array(k).fill(0), versions: new Map() };
}

/**
 * Do logged propensities agree with the action mix in this window? (E[1{A=a}/p] = 1 for every action), tested
 * as balance.weights tests it (countBalance: exact binomial below `minExpected` expected events, normal above).
 */
function balanced(w: Window, minEffect: number, alpha: number, minExpected: number): boolean {
  if (w.nP < MIN_WINDOW_ROWS) return true;
  return w.s1.every((s1, a) => {
    const logged = w.logged[a] as number;
    if (s1 === 0 || logged === 0 || w.lowFloor.has(a)) return true;
    const r = countBalance(w.nP, logged, s1, w.s2[a] as number, minExpected);
    return !(r.pValue < alpha && Math.abs(r.balance - 1) > minEffect);
  });
}

/**
 * drift.policy: logging-policy drift — action mix over time, PSI first vs last window, version switches.
 * `plain` finds a candidate group's cells by testing every cell (the straightforward definition, which
 * test/core/pure-speed-equivalence.test.ts holds the indexed lookup equal to).
 */
export function checkPolicyDrift(ctx: AuditContext, plain = false): ReturnType<typeof result> {
  if (!ctx.rows || ctx.cells.length === 0) return skipped('drift.policy', 'the propensity, action or reward role is missing');
  const b = ctx.buckets;
  if (!b || b.count < 2) return skipped('drift.policy', ctx.roles.time ? 'the log spans a single time bucket' : 'no time column mapped');
  const actions = ctx.view.actions;
  const ai = new Map(actions.map((a, i) => [a, i]));
  const edge = Math.max(1, Math.floor(b.count / 4));
  const floor = ctx.settings['support.floor.epsilon'];
  const groups = new Map<string, Group>();
  const touch = (key: string, segment: Record<string, string>, column: number | null) => {
    let g = groups.get(key);
    if (!g) groups.set(key, (g = { segment, column, counts: Array.from({ length: b.count }, () => new Array(actions.length).fill(0)), first: emptyWindow(actions.length), last: emptyWindow(actions.length) }));
    return g;
  };
  const add = (g: Group, c: CubeCell, a: number) => {
    const row = g.counts[c.bucket] as number[];
    row[a] = (row[a] as number) + c.n;
    if (c.minP !== null && c.minP < floor) {
      g.first.lowFloor.add(a);
      g.last.lowFloor.add(a);
    }
    const w = c.bucket < edge ? g.first : c.bucket >= b.count - edge ? g.last : null;
    if (!w) return;
    w.nP += c.nP;
    w.logged[a] = (w.logged[a] as number) + c.nP;
    w.s1[a] = (w.s1[a] as number) + c.sumInvP;
    w.s2[a] = (w.s2[a] as number) + c.sumInvP2;
    w.counts[a] = (w.counts[a] as number) + c.n;
    if (c.minP !== null && c.minP < floor) w.lowFloor.add(a);
    w.versions.set(c.version, (w.versions.get(c.version) ?? 0) + c.n);
  };
  // segments without exploration are propensity.exploration's finding; left in, their B = 0 actions would read as drift
  const unexplored = new Set(explorationBySegment(ctx).filter((e) => !e.explored).map((e) => e.segment.join('\u001f')));
  const cells = unexplored.size ? ctx.cells.filter((c) => !unexplored.has(ctx.view.segmentKeyOf(c))) : ctx.cells;
  // the group of each (column, value) is looked up by its key once, then by the value
  const byValue = ctx.segmentColumns.map(() => new Map<string, Group>());
  let everyRow: Group | undefined;
  for (const c of cells) {
    const a = ai.get(c.action);
    if (a === undefined || c.bucket < 0 || c.bucket >= b.count) continue;
    add((everyRow ??= touch('*', {}, null)), c, a);
    ctx.segmentColumns.forEach((col, j) => {
      const v = c.segment[j] as string;
      const known = byValue[j] as Map<string, Group>;
      let g = known.get(v);
      if (!g) known.set(v, (g = touch(`${col}=${v}`, { [col]: v }, j)));
      add(g, c, a);
    });
  }
  const q = ctx.settings['drift.policy.q'];
  const psiWarn = ctx.settings['drift.policy.psi_warn'];
  const minEffect = ctx.settings['drift.policy.min_effect'];
  const minExpected = ctx.settings['balance.min_expected'];
  const alpha = ctx.settings['balance.q'] / Math.max(1, actions.length);
  const list = [...groups.values()].map((g) => {
    const rows = g.counts.filter((r) => r.reduce((s, x) => s + x, 0) >= MIN_BUCKET_ROWS);
    const chi = rows.length >= 2 ? chiSquareHomogeneity(rows) : null;
    const psi = g.first.counts.some((x) => x > 0) && g.last.counts.some((x) => x > 0) ? populationStabilityIndex(g.first.counts, g.last.counts) : 0;
    const dom = (w: Window) => [...w.versions.entries()].sort((x, y) => y[1] - x[1])[0]?.[0] ?? '';
    return { g, p: chi ? chi.pValue : 1, psi, explainedByPropensities: balanced(g.first, minEffect, alpha, minExpected) && balanced(g.last, minEffect, alpha, minExpected), versionFrom: dom(g.first), versionTo: dom(g.last) };
  });
  const bh = benjaminiHochberg(list.map((x) => x.p), q);
  const switches = versionSwitches(ctx);
  // explain away: a group stays unexplained only if it is still unbalanced without the rows of groups already reported (`excluded`)
  const actionOf = cells.map((c) => ai.get(c.action));
  const excluded = new Uint8Array(cells.length);
  // each group's cells (ascending indexes: every sum below adds them in the order a pass over all cells would),
  // indexed by segment value once rather than testing every cell for every candidate
  let byColumnValue: Map<string, number[]>[] | null = null;
  const membersOf = (g: Group): readonly number[] => {
    if (g.column === null) return cells.map((_, i) => i);
    const j = g.column, v = g.segment[ctx.segmentColumns[j] as string] as string;
    if (plain) return cells.flatMap((c, i) => (c.segment[j] === v ? [i] : []));
    byColumnValue ??= ctx.segmentColumns.map((_, j) => {
      const m = new Map<string, number[]>();
      cells.forEach((c, i) => {
        const v = c.segment[j] as string;
        const list = m.get(v);
        if (list) list.push(i);
        else m.set(v, [i]);
      });
      return m;
    });
    return byColumnValue[j]?.get(v) ?? [];
  };
  const windowOf = (members: readonly number[]) => {
    const first = emptyWindow(actions.length);
    const last = emptyWindow(actions.length);
    for (const i of members) {
      const c = cells[i] as CubeCell;
      const a = actionOf[i];
      if (a === undefined || c.bucket < 0 || excluded[i]) continue;
      if (c.minP !== null && c.minP < floor) {
        first.lowFloor.add(a);
        last.lowFloor.add(a);
      }
      const w = c.bucket < edge ? first : c.bucket >= b.count - edge ? last : null;
      if (!w) continue;
      w.nP += c.nP;
      w.logged[a] = (w.logged[a] as number) + c.nP;
      w.s1[a] = (w.s1[a] as number) + c.sumInvP;
      w.s2[a] = (w.s2[a] as number) + c.sumInvP2;
      if (c.minP !== null && c.minP < floor) w.lowFloor.add(a);
    }
    return { first, last };
  };
  const imbalance = (w: Window) => Math.max(0, ...w.s1.map((s1, a) => (w.nP > 0 && s1 > 0 && !w.lowFloor.has(a) ? Math.abs(s1 / w.nP - 1) : 0)));

  const candidates = list.map((x, i) => ({ x, i })).filter(({ x, i }) => bh.rejected[i] && x.psi >= PSI_NOTICE && !x.explainedByPropensities);
  candidates.sort((u, v) => Math.max(imbalance(v.x.g.last), imbalance(v.x.g.first)) - Math.max(imbalance(u.x.g.last), imbalance(u.x.g.first)));
  for (const { x } of candidates) {
    const members = membersOf(x.g);
    const w = windowOf(members);
    if (balanced(w.first, minEffect, alpha, minExpected) && balanced(w.last, minEffect, alpha, minExpected)) x.explainedByPropensities = true;
    else for (const i of members) excluded[i] = 1;
  }
  const findings: DraftFinding[] = [];
  list.forEach((x, i) => {
    if (!bh.rejected[i] || x.psi < PSI_NOTICE) return;
    const unexplained = !x.explainedByPropensities;
    const versionChange = ctx.roles.policy_version && x.versionFrom !== x.versionTo;
    const status = unexplained ? ('warn' as const) : ('pass' as const);
    const seg = segmentPredicate(ctx.rows!, ctx.segmentColumns, x.g.segment);
    findings.push({
      segment: x.g.segment,
      window: versionChange && switches[0] ? bucketWindow(b, switches[0].bucket, b.count) : bucketWindow(b, 0, b.count),
      status,
      metrics: { psi: x.psi, p_adjusted: bh.adjusted[i] as number, propensities_follow_mix: x.explainedByPropensities, version_first: x.versionFrom || null, version_last: x.versionTo || null },
      message: `action mix in ${describeSegment(x.g.segment)} shifts between the first and last ${edge} ${edge === 1 ? 'bucket' : 'buckets'} (PSI ${fmt(x.psi)}${x.psi > psiWarn ? ', large' : ''}${versionChange ? `; policy ${x.versionFrom} → ${x.versionTo}` : ''}): ${unexplained ? 'the logged propensities did NOT move with the action mix, so they no longer describe the policy that chose the actions' : 'the logged propensities moved with it, so the shift is a logged policy change'}`,
      ...(seg ? { where: seg } : {}),
    });
  });
  findings.sort((a, c) => (a.status === c.status ? Number(c.metrics.psi) - Number(a.metrics.psi) : a.status === 'warn' ? -1 : 1));
  const warnCount = findings.filter((f) => f.status === 'warn').length;
  const status = warnCount ? 'warn' : 'pass';
  const summary =
    `${switches.length ? `Policy version switches: ${switches.map((s) => `${s.from} → ${s.to} at ${s.at}`).join('; ')}. ` : ''}` +
    (warnCount
      ? `${counted(warnCount, 'unexplained action-mix shift')}, e.g. ${describeSegment(findings[0]!.segment)}.`
      : findings.length === 0 ? 'No action-mix shifts.' : `${counted(findings.length, 'action-mix shift')}, each matched by the logged propensities.`);
  const all = groups.get('*')!;
  const mix: Series = {
    name: 'action mix over time (all rows)',
    kind: 'bars',
    x: all.counts.map((_, i) => isoUs(b.originUs + i * b.widthUs)),
    values: actions.map((_, a) => all.counts.map((r) => {
      const n = r.reduce((s, v) => s + v, 0);
      return n ? (r[a] as number) / n : null;
    })),
    labels: [...actions],
    unit: 'share of rows',
    ...(switches.length ? { marks: switchMarks(switches, b) } : {}),
  };
  return result('drift.policy', status, summary, { groups: list.length, shifts: findings.length, unexplained: warnCount, version_switches: switches.map((s) => `${s.from}→${s.to}@${s.at}`).join('; ') || null }, findings, ['drift.policy.q', 'drift.policy.psi_warn', 'drift.policy.min_effect', 'balance.q', 'balance.min_expected', 'support.floor.epsilon'], [mix]);
}

export const driftPolicy: CheckDefinition<'drift.policy'> = defineCheck('drift.policy', {
  title: 'Logging-policy drift', blocking: false, panel: 'drift', remedies: ['plan'],
  settings: ['drift.policy.q', 'drift.policy.psi_warn', 'drift.policy.min_effect', 'balance.q', 'balance.min_expected', 'support.floor.epsilon'],
}, (ctx) => checkPolicyDrift(ctx));
