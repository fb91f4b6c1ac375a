/**
 * Evaluate where the log supports it (README.md, "Remedies"): the supported region of segments × actions, and
 * each target's estimate restricted to it, plus a supported variant of the target over the whole log.
 */
import { segmentKey, SEP } from '../cube/rollup.ts';
import type { EstimatorCell } from '../cube/types.ts';
import { doublyRobust, ips, snips, type Estimate } from '../stats/estimators.ts';
import type { CubeView, TargetAnalysis } from '../targets/analysis.ts';
import { countText, counted } from '../count-words.ts';

export type ExclusionReason = 'never logged' | 'below floor' | 'too few rows';

export interface ExcludedCell {
  readonly segment: readonly string[];
  readonly action: string;
  readonly reason: ExclusionReason;
  /** valid-propensity rows of the cell */
  readonly rows: number;
  readonly minPropensity: number | null;
}

export interface SupportedRegion {
  readonly epsilon: number;
  readonly minRows: number;
  /** segment × action pairs considered (every segment of the view × every action of the log) */
  readonly cells: number;
  readonly excluded: readonly ExcludedCell[];
  /** the pair is supported: at least minRows valid-propensity rows, every one with propensity ≥ ε */
  readonly supports: (segment: readonly string[], action: string) => boolean;
  readonly supportsKey: (segmentKey: string, action: string) => boolean;
}

const pairKey = (segKey: string, action: string) => `${segKey}${SEP}${SEP}${action}`;

/**
 * The supported region: (segment, action) pairs with at least `minRows` rows of valid propensity, all at or above the
 * floor ε. Pairs of actions the log never shows anywhere are outside it too (`supports` answers false).
 */
export function supportedRegion(view: CubeView, epsilon: number, minRows: number): SupportedRegion {
  const byKey = new Map(view.cells.map((c) => [pairKey(segmentKey(c.segment), c.action), c.totals]));
  const inside = new Set<string>();
  const excluded: ExcludedCell[] = [];
  for (const seg of view.segments) {
    const key = segmentKey(seg.segment);
    for (const action of view.actions) {
      const t = byKey.get(pairKey(key, action));
      const rows = t?.nP ?? 0;
      const minP = t?.minP ?? null;
      const reason: ExclusionReason | null = rows === 0 ? 'never logged' : minP !== null && minP < epsilon ? 'below floor' : rows < minRows ? 'too few rows' : null;
      if (reason) excluded.push({ segment: seg.segment, action, reason, rows, minPropensity: minP });
      else inside.add(pairKey(key, action));
    }
  }
  const supportsKey = (k: string, a: string) => inside.has(pairKey(k, a));
  return { epsilon, minRows, cells: view.segments.length * view.actions.length, excluded, supports: (s, a) => supportsKey(segmentKey(s), a), supportsKey };
}

export interface RestrictedEstimate {
  /** share of the target's probability mass (rows weighted by their segment's share) on supported pairs */
  readonly massInside: number;
  /** the target's mean reward over its choices inside the region, E_π[r | (s, a) supported] */
  readonly ips: Estimate | null;
  readonly snips: Estimate | null;
  readonly dr: Estimate | null;
  /** the supported variant over the whole log: off-support mass moved to the logging policy's own choice */
  readonly variant: { readonly ips: Estimate | null; readonly snips: Estimate | null };
  readonly notes: readonly string[];
}

function scaled(e: Estimate, by: number): Estimate {
  return { value: e.value / by, se: e.se / by, ciLow: e.ciLow / by, ciHigh: e.ciHigh / by };
}

function attempt(name: string, notes: string[], fn: () => Estimate): Estimate | null {
  try {
    return fn();
  } catch (e) {
    notes.push(`${name}: ${(e as Error).message}`);
    return null;
  }
}

/**
 * The restricted estimate of a target given per (segment, action). With R the region and m = the target's mass in R,
 *   IPS_R = Σ_R wr / (n·m), SNIPS_R = Σ_R wr / Σ_R w, DR_R = DR of π·1{R} (a partial policy) / m;
 * each estimates the target's mean reward over its choices in R (its value where the log can speak for it).
 * The supported variant π′(a|x) = π(a|s)·1{(s, a) ∈ R} + (1 − m(s))·μ(a|x) follows the logging policy μ with the
 * mass the target puts outside R in segment s, so its weight is π(a|s)·1{R}/p + (1 − m(s)) and it needs only the
 * cube; its IPS and SNIPS use the cube's sums, with Σr²/p (absent from the cube) equal to Σr/p for a 0/1 reward
 * and bounded by √(Σr²·Σr²/p²) (Cauchy–Schwarz) otherwise, which can only widen the interval.
 */
export function restrictedEstimate(t: TargetAnalysis, view: CubeView, region: SupportedRegion, rewardedRows: number): RestrictedEstimate {
  const notes: string[] = [];
  const q = t.q;
  if (!q) {
    return { massInside: NaN, ips: null, snips: null, dr: null, variant: { ips: null, snips: null }, notes: ['a target column gives q only for the logged action, so its mass outside the region is unknown'] };
  }
  const rows = Math.max(1, view.rows);
  const massOf = new Map<string, number>();
  let inside = 0;
  for (const seg of view.segments) {
    const key = segmentKey(seg.segment);
    let m = 0;
    for (const a of t.actions) if (region.supportsKey(key, a)) m += q(seg.segment, a) ?? 0;
    massOf.set(key, m);
    inside += (seg.totals.n / rows) * m;
  }
  const restricted: EstimatorCell[] = t.estimatorCells.map((c) => (region.supportsKey(c.segmentKey, c.action) ? c : { ...c, q: 0 }));
  const inRegion = restricted.filter((c) => c.q > 0);
  let i: Estimate | null = null, s: Estimate | null = null, d: Estimate | null = null;
  if (inside > 0 && inRegion.length > 0) {
    i = attempt('IPS', notes, () => scaled(ips(inRegion, rewardedRows), inside));
    s = attempt('SNIPS', notes, () => snips(inRegion));
    if (t.undefinedShare === 0) {
      const segOf = new Map(t.bySegment.map((b) => [segmentKey(b.segment), b.segment]));
      const qR = (key: string, a: string) => (region.supportsKey(key, a) ? q(segOf.get(key) ?? key.split(SEP), a) ?? 0 : 0);
      d = attempt('DR', notes, () => scaled(doublyRobust(restricted, qR, t.actions, { partial: true }), inside));
    } else notes.push('DR: the target does not define every segment');
  } else notes.push('the target puts no probability on the supported region');
  const variantCells: EstimatorCell[] = [];
  for (const c of view.cells) {
    const x = c.totals;
    if (x.nRw === 0) continue;
    const key = segmentKey(c.segment);
    const qr = region.supportsKey(key, c.action) ? q(c.segment, c.action) ?? 0 : 0;
    const k = 1 - (massOf.get(key) ?? 0);
    const r2InvP = x.sumR2 === x.sumR ? x.sumRInvP : Math.sqrt(x.sumR2 * x.sumR2InvP2);
    variantCells.push({
      preweighted: true, segmentKey: key, action: c.action, q: 1, n: x.nRw,
      sumInvP: qr * x.sumInvPRw + k * x.nRw,
      sumInvP2: qr * qr * x.sumInvP2Rw + 2 * qr * k * x.sumInvPRw + k * k * x.nRw,
      sumR: x.sumR, sumR2: x.sumR2,
      sumRInvP: qr * x.sumRInvP + k * x.sumR,
      sumRInvP2: qr * qr * x.sumRInvP2 + 2 * qr * k * x.sumRInvP + k * k * x.sumR,
      sumR2InvP2: qr * qr * x.sumR2InvP2 + 2 * qr * k * r2InvP + k * k * x.sumR2,
    });
  }
  const variant = {
    ips: attempt('variant IPS', notes, () => ips(variantCells, rewardedRows)),
    snips: attempt('variant SNIPS', notes, () => snips(variantCells)),
  };
  return { massInside: Math.min(1, inside), ips: i, snips: s, dr: d, variant, notes };
}

/** What the restricted estimate leaves out, in words. */
export function notCovered(region: SupportedRegion, massInside: number): string {
  const never = region.excluded.filter((c) => c.reason === 'never logged').length;
  const below = region.excluded.filter((c) => c.reason === 'below floor').length;
  const few = region.excluded.filter((c) => c.reason === 'too few rows').length;
  const parts = [never ? `${countText(never)} never logged` : '', below ? `${countText(below)} with a propensity below ${region.epsilon}` : '', few ? `${countText(few)} with fewer than ${counted(region.minRows, 'row')}` : ''].filter(Boolean);
  const share = Number.isFinite(massInside) ? `${(100 * (1 - massInside)).toFixed(1)}% of the target's probability mass` : "the target's mass";
  return `It says nothing about the target's choices outside the region (${share}, on ${region.excluded.length} of ${region.cells} segment × action pairs${parts.length ? `: ${parts.join(', ')}` : ''}): there the log holds no evidence, and the target's value there may be better or worse. Rows without a valid propensity are left out, as in every estimate; it is the value over the region, not the target's value, unless the target's choices outside it do as well as inside.`;
}
