/**
 * Audit progress in the log's own terms: stage k of n, how much of the log the running pass has read, the
 * share of the whole audit done, and the time left (or "estimating" while too little is known).
 *
 * An audit is four stages; each stage runs passes over the log (queries that scan it) and then computes.
 * The engine reports, per query, the share of the log it has read (DuckDB's query progress); the audit
 * says which pass runs (audit.ts). The share of the audit weighs every pass by its cost relative to the
 * cube's pass, measured with bench/stages.ts on the demo log at 3M rows and at 100M rows (native engine):
 * the two profile passes 0.28 + 0.21 (0.33 together at 100M), duplicates 1.0 (1.6 at 100M), a target's
 * weight tail 0.21 (0.35), the clip rows 0.40 (0.48), the example rows 0.5 (0.09). The checks' own
 * computation does not grow with the rows but with the cube's cells (4.4 s for 14,324 cells at 3M rows,
 * 1.1 s at 125k rows): it is counted in seconds per cell and turned into pass units with the cube pass's
 * measured time. Everything here is pure: the caller passes the clock and the engine's percentage.
 */

export const AUDIT_STAGES = ['profile', 'cube', 'tails', 'checks'] as const;
export type AuditStage = (typeof AUDIT_STAGES)[number];

/** The passes an audit makes over the log. */
export type PassKind = 'profile-first' | 'profile' | 'evidence' | 'scales' | 'cube' | 'duplicates' | 'tail' | 'clip' | 'examples' | 'other';

/** Cost of each pass relative to the cube's pass (bench/stages.ts, see above; the rounder of the two sizes). */
export const PASS_COST: Readonly<Record<PassKind, number>> = {
  'profile-first': 0.15,
  profile: 0.25,
  evidence: 0.05,
  scales: 0.3,
  cube: 1,
  duplicates: 1.3,
  tail: 0.3,
  clip: 0.45,
  examples: 0.2,
  other: 0.1,
};

/** Seconds of the checks' computation per cube cell (4.4 s / 14,324 cells on the 3M demo log, bench/stages.ts). */
export const CHECK_SECONDS_PER_CELL = 3e-4;
/** The checks' computation in pass units while the cube pass has not been timed. */
const CHECK_UNITS_UNTIMED = 0.5;

/** What a stage is expected to do: its passes in order and, for the checks, the cube's cells. */
export interface StagePlan {
  readonly passes: readonly PassKind[];
  readonly cells?: number;
}

/** The plan assumed for a stage not started yet (a decision id, one target with its clip rows). */
export const DEFAULT_PLANS: Readonly<Record<AuditStage, StagePlan>> = {
  profile: { passes: ['profile-first', 'profile'] },
  cube: { passes: ['cube'] },
  tails: { passes: ['duplicates', 'tail', 'clip'] },
  checks: { passes: ['examples'] },
};

/** What the audit says: a stage starts (with its plan), a pass starts, or a stage ends. */
export interface AuditProgressEvent {
  readonly stage: AuditStage;
  readonly done?: boolean;
  readonly plan?: StagePlan;
  readonly pass?: PassKind;
  /** The cube's cells, once known (the cube stage's end): the checks' computation grows with them. */
  readonly cells?: number;
}

export interface ProgressPoint {
  readonly stage: AuditStage;
  /** 1-based */
  readonly stageIndex: number;
  readonly stageCount: number;
  /** Share of the log the running pass has read (0…1), when the engine tells; null between passes or when it cannot. */
  readonly logShare: number | null;
  /** Share of the whole audit done (0…1), never going back. */
  readonly share: number;
  /** Estimated seconds left; null while estimating. */
  readonly secondsLeft: number | null;
  readonly elapsedSeconds: number;
}

/** The estimate is given once a full pass has been timed and this much of the audit is done. */
const ESTIMATE_FROM_SHARE = 0.05;
const ESTIMATE_FROM_SECONDS = 2;

/** Pass units a plan costs; the checks' computation uses the cube's measured seconds per unit when known. */
export function planUnits(stage: AuditStage, plan: StagePlan, secondsPerUnit: number | null): number {
  const passes = plan.passes.reduce((a, k) => a + PASS_COST[k], 0);
  if (stage !== 'checks') return passes;
  const compute = plan.cells !== undefined && secondsPerUnit !== null && secondsPerUnit > 0 ? (plan.cells * CHECK_SECONDS_PER_CELL) / secondsPerUnit : CHECK_UNITS_UNTIMED;
  return passes + compute;
}

/** Time left from the share done so far at a steady rate: elapsed · (1 − share) / share. */
export function secondsLeft(share: number, elapsedSeconds: number): number {
  return share >= 1 ? 0 : (elapsedSeconds * (1 - share)) / share;
}

/**
 * Follows one audit. `event` takes what the audit says, `sample` what the engine says (its query
 * percentage, 0…100, or a negative number / null when it cannot tell); both return the current point.
 */
export class ProgressTracker {
  private readonly plans: Record<AuditStage, StagePlan> = { ...DEFAULT_PLANS };
  private stageAt = 0;
  private readonly finished = new Set<AuditStage>();
  /** Passes started in the current stage, in order. */
  private passes: PassKind[] = [];
  private passShare = 0;
  private passKnown = false;
  private passStartedMs = 0;
  private stageStartedMs = 0;
  private secondsPerUnit: number | null = null;
  private best = 0;
  private lastMs: number;

  constructor(private readonly startMs: number) {
    this.lastMs = startMs;
  }

  event(e: AuditProgressEvent, nowMs: number): ProgressPoint {
    const index = AUDIT_STAGES.indexOf(e.stage);
    this.closePass(nowMs);
    if (e.cells !== undefined) this.plans.checks = { ...this.plans.checks, cells: e.cells };
    if (e.done) {
      this.finished.add(e.stage);
      if (index === this.stageAt) this.passes = [];
    } else {
      if (index !== this.stageAt) {
        this.passes = [];
        this.stageStartedMs = nowMs;
      }
      this.stageAt = Math.max(this.stageAt, index);
      if (e.plan) this.plans[e.stage] = e.plan;
      if (e.pass) {
        this.passes.push(e.pass);
        this.passStartedMs = nowMs;
      }
    }
    this.passShare = 0;
    this.passKnown = false;
    return this.point(nowMs);
  }

  sample(percentage: number | null | undefined, nowMs: number): ProgressPoint {
    if (typeof percentage === 'number' && Number.isFinite(percentage) && percentage >= 0 && this.passes.length > 0) {
      this.passShare = Math.max(this.passShare, Math.min(1, percentage / 100));
      this.passKnown = true;
    }
    return this.point(nowMs);
  }

  /** Times the cube's pass when it ends: pass units are then worth its seconds. */
  private closePass(nowMs: number): void {
    if (this.passes[this.passes.length - 1] === 'cube' && this.secondsPerUnit === null && nowMs > this.passStartedMs) this.secondsPerUnit = (nowMs - this.passStartedMs) / 1000;
  }

  point(nowMs: number): ProgressPoint {
    this.lastMs = Math.max(this.lastMs, nowMs);
    const stage = AUDIT_STAGES[this.stageAt] as AuditStage;
    const units = AUDIT_STAGES.map((s) => planUnits(s, this.plans[s], this.secondsPerUnit));
    const total = units.reduce((a, b) => a + b, 0);
    let done = 0;
    AUDIT_STAGES.forEach((s, i) => {
      if (this.finished.has(s) || i < this.stageAt) done += units[i] as number;
    });
    if (!this.finished.has(stage)) {
      const current = this.passes[this.passes.length - 1];
      const before = this.passes.slice(0, -1).reduce((a, k) => a + PASS_COST[k], 0);
      let within = before + (current ? PASS_COST[current] * this.passShare : 0);
      // the checks compute before their one pass (the example rows): that time counts at the cube's pace
      if (stage === 'checks' && this.passes.length === 0 && this.secondsPerUnit) {
        const compute = planUnits('checks', { passes: [], ...(this.plans.checks.cells === undefined ? {} : { cells: this.plans.checks.cells }) }, this.secondsPerUnit);
        within = Math.min(compute, (this.lastMs - this.stageStartedMs) / 1000 / this.secondsPerUnit);
      }
      // a stage's own computation is not seen, so the passes never claim more than the stage
      done += Math.min(within, (units[this.stageAt] as number) * 0.98);
    }
    const allDone = AUDIT_STAGES.every((s) => this.finished.has(s));
    const share = allDone ? 1 : Math.min(0.99, total > 0 ? done / total : 0);
    this.best = Math.max(this.best, share);
    const elapsedSeconds = (this.lastMs - this.startMs) / 1000;
    const estimating = !allDone && (this.secondsPerUnit === null || this.best < ESTIMATE_FROM_SHARE || elapsedSeconds < ESTIMATE_FROM_SECONDS);
    return {
      stage,
      stageIndex: this.stageAt + 1,
      stageCount: AUDIT_STAGES.length,
      logShare: this.passKnown && this.passes.length > 0 ? this.passShare : null,
      share: this.best,
      secondsLeft: estimating ? null : secondsLeft(this.best, elapsedSeconds),
      elapsedSeconds,
    };
  }
}

/** The pass a query record's name stands for (audit.ts names them). */
export function passOf(name: string): PassKind {
  if (name === 'profile (first rows)') return 'profile-first';
  if (name === 'profile') return 'profile';
  if (name.startsWith('role evidence')) return 'evidence';
  if (name === 'cube scales') return 'scales';
  if (name === 'cube') return 'cube';
  if (name === 'duplicates') return 'duplicates';
  if (name.startsWith('tail ')) return 'tail';
  if (name.startsWith('clip ')) return 'clip';
  if (name === 'examples') return 'examples';
  return 'other';
}

/** "about 40 s left", "about 3 min left"; rounded so the figure does not claim more than it knows. */
export function timeLeftWords(seconds: number | null): string {
  if (seconds === null) return 'estimating the time left';
  if (seconds < 1) return 'almost done';
  if (seconds < 60) return `about ${Math.max(1, Math.round(seconds / (seconds < 10 ? 1 : 5)) * (seconds < 10 ? 1 : 5))} s left`;
  if (seconds < 3600) return `about ${Math.round(seconds / 60)} min left`;
  return `about ${(seconds / 3600).toFixed(1)} h left`;
}

/** One line: "stage 2 of 4 · this pass has read 45% of the log · 37% of the audit done · about 40 s left". */
export function progressWords(p: ProgressPoint): string {
  const parts = [`stage ${p.stageIndex} of ${p.stageCount}`];
  if (p.logShare !== null) parts.push(`this pass has read ${Math.floor(p.logShare * 100)}% of the log`);
  parts.push(`${Math.floor(p.share * 100)}% of the audit done`, timeLeftWords(p.secondsLeft));
  return parts.join(' · ');
}
