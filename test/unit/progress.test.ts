/**
 * The progress model (app/core/progress.ts): stage k of n, the running pass's share of the log, the share of
 * the audit (weighted by the measured pass costs), never going back, and the time left by straight-line
 * extrapolation, elapsed · (1 − share) / share (common practice for progress bars), "estimating" until a
 * full pass has been timed. The last tests follow a real audit of the demo log: every pass the audit runs
 * was in its stage's plan, and the share ends at 1 without going back.
 */
import { describe, expect, it } from 'vitest';
import { runAudit } from '../../app/core/audit.ts';
import { AUDIT_STAGES, CHECK_SECONDS_PER_CELL, DEFAULT_PLANS, PASS_COST, ProgressTracker, passOf, planUnits, progressWords, timeLeftWords, type AuditProgressEvent, type PassKind } from '../../app/core/progress.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { ProgressLine } from '../../app/cli/progress.ts';
import { SAMPLE } from '../core/audit-helpers.ts';

const sum = (kinds: readonly PassKind[]) => kinds.reduce((a, k) => a + PASS_COST[k], 0);

describe('ProgressTracker', () => {
  it('weighs the running pass by its cost and the engine percentage (hand sum)', () => {
    const t = new ProgressTracker(0);
    t.event({ stage: 'profile', plan: { passes: ['profile-first', 'profile'] } }, 0);
    t.event({ stage: 'profile', pass: 'profile-first' }, 10);
    t.event({ stage: 'profile', pass: 'profile' }, 200);
    t.event({ stage: 'profile', done: true }, 400);
    t.event({ stage: 'cube', plan: { passes: ['cube'] } }, 410);
    t.event({ stage: 'cube', pass: 'cube' }, 420);
    const p = t.sample(40, 800);
    // done: both profile passes, 40% of the cube; total: the default tails and checks plans (checks untimed: 0.5)
    const done = PASS_COST['profile-first'] + PASS_COST.profile + 0.4 * PASS_COST.cube;
    const total = PASS_COST['profile-first'] + PASS_COST.profile + PASS_COST.cube + sum(DEFAULT_PLANS.tails.passes) + sum(DEFAULT_PLANS.checks.passes) + 0.5;
    expect(p.share).toBeCloseTo(done / total, 12);
    expect(p.stage).toBe('cube');
    expect([p.stageIndex, p.stageCount]).toEqual([2, 4]);
    expect(p.logShare).toBeCloseTo(0.4, 12);
    expect(progressWords(p)).toMatch(/^stage 2 of 4 · this pass has read 40% of the log · \d+% of the audit done · estimating the time left$/);
  });

  it('never goes back: a lower engine percentage, a new pass, a larger plan', () => {
    const t = new ProgressTracker(0);
    t.event({ stage: 'profile', plan: { passes: [] } }, 0);
    t.event({ stage: 'profile', done: true }, 1);
    t.event({ stage: 'cube', plan: { passes: ['cube'] } }, 2);
    t.event({ stage: 'cube', pass: 'cube' }, 3);
    const shares = [t.sample(70, 100).share, t.sample(30, 200).share, t.sample(-1, 300).share];
    expect(shares[1]).toBe(shares[0]);
    expect(shares[2]).toBe(shares[0]);
    t.event({ stage: 'cube', done: true }, 1000);
    const afterCube = t.sample(null, 1001).share;
    // the tails stage turns out to run eight tails: the total grows, the share stays
    const p = t.event({ stage: 'tails', plan: { passes: ['duplicates', ...Array<PassKind>(8).fill('tail'), 'clip'] } }, 1002);
    expect(p.share).toBeGreaterThanOrEqual(afterCube);
    expect(p.logShare).toBeNull();
  });

  it('says estimating until the cube pass is timed, then elapsed · (1 − share) / share', () => {
    const t = new ProgressTracker(0);
    t.event({ stage: 'profile', plan: { passes: ['profile'] } }, 0);
    t.event({ stage: 'profile', pass: 'profile' }, 0);
    expect(t.sample(100, 5000).secondsLeft).toBeNull();
    t.event({ stage: 'profile', done: true }, 5000);
    t.event({ stage: 'cube', plan: { passes: ['cube'] } }, 5000);
    t.event({ stage: 'cube', pass: 'cube' }, 5000);
    expect(t.sample(90, 9000).secondsLeft).toBeNull();
    t.event({ stage: 'cube', done: true }, 10000);
    const p = t.point(10000);
    expect(p.secondsLeft).not.toBeNull();
    expect(p.secondsLeft as number).toBeCloseTo((10 * (1 - p.share)) / p.share, 9);
    expect(p.elapsedSeconds).toBe(10);
  });

  it('counts the checks in seconds per cell, turned into pass units by the timed cube', () => {
    // the cube pass took 2 s: a unit is 2 s; 10,000 cells at CHECK_SECONDS_PER_CELL is 3 s, 1.5 units
    expect(planUnits('checks', { passes: ['examples'], cells: 10_000 }, 2)).toBeCloseTo(PASS_COST.examples + (10_000 * CHECK_SECONDS_PER_CELL) / 2, 12);
    expect(planUnits('checks', { passes: [], cells: 10_000 }, null)).toBe(0.5);
    expect(planUnits('tails', { passes: ['tail', 'tail'] }, 2)).toBeCloseTo(2 * PASS_COST.tail, 12);
  });

  it('reaches 1 only when every stage is done, and then nothing is left', () => {
    const t = new ProgressTracker(0);
    for (const s of AUDIT_STAGES) {
      t.event({ stage: s, plan: { passes: [] } }, 0);
      if (s !== 'checks') t.event({ stage: s, done: true }, 0);
    }
    expect(t.point(1).share).toBeLessThan(1);
    const p = t.event({ stage: 'checks', done: true }, 3000);
    expect(p.share).toBe(1);
    expect(p.secondsLeft).toBe(0);
  });

  it('words the time left without false precision', () => {
    expect(timeLeftWords(null)).toBe('estimating the time left');
    expect(timeLeftWords(7.4)).toBe('about 7 s left');
    expect(timeLeftWords(43)).toBe('about 45 s left');
    expect(timeLeftWords(200)).toBe('about 3 min left');
  });

  it('names the pass of each query record', () => {
    expect(['profile (first rows)', 'profile', 'role evidence (3-4)', 'cube', 'duplicates', 'tail always:x', 'clip v9', 'examples', 'describe'].map(passOf))
      .toEqual(['profile-first', 'profile', 'evidence', 'cube', 'duplicates', 'tail', 'clip', 'examples', 'other']);
  });
});

describe('progress of a real audit (the demo log, native engine)', () => {
  it('runs only planned passes, stage by stage in order, and ends at 1 without going back', async () => {
    const engine = await createNativeEngine({ threads: 1 });
    try {
      const src = await engine.register({ kind: 'path', paths: [`${SAMPLE}maple-row-demo.parquet`] });
      const events: AuditProgressEvent[] = [];
      const tracker = new ProgressTracker(0);
      const shares: number[] = [];
      let clock = 0;
      await runAudit((sql) => engine.query(sql), {
        relation: src.relation, input: { files: [], format: src.format }, engine: 'native',
        onProgress: (e) => { events.push(e); shares.push(tracker.event(e, (clock += 100)).share); },
      });
      expect(events.filter((e) => e.plan && !e.done).map((e) => e.stage)).toEqual([...AUDIT_STAGES]);
      for (const stage of AUDIT_STAGES) {
        const planned = [...(events.find((e) => e.stage === stage && e.plan)?.plan?.passes ?? [])];
        const ran = events.filter((e) => e.stage === stage && e.pass).map((e) => e.pass);
        // every planned pass runs, except example rows when no finding has rows to show
        expect(ran).toEqual(stage === 'checks' ? planned.slice(0, ran.length) : planned);
      }
      expect(shares.every((s, i) => i === 0 || s >= (shares[i - 1] as number))).toBe(true);
      expect(shares[shares.length - 1]).toBe(1);
    } finally {
      await engine.close();
    }
  }, 60_000);
});

describe('the terminal progress line', () => {
  it('shows stage k of n, the pass, the share done and the time left, from the engine percentage', () => {
    let now = 0;
    let pct: number | null = null;
    const line = new ProgressLine({ write: () => true } as never, false, () => pct, () => now);
    line.stage('opening the log');
    expect(line.line()).toBe('opening the log · 0.0 s');
    line.audit({ stage: 'profile', plan: { passes: ['profile'] } }, 'profiling columns');
    line.audit({ stage: 'profile', pass: 'profile' }, 'profiling columns');
    now = 500;
    pct = 50;
    expect(line.line()).toMatch(/^profiling columns · stage 1 of 4 · this pass has read 50% of the log · \d+% of the audit done · estimating the time left · 0\.5 s$/);
  });
});

describe('the checks computation before its pass', () => {
  it('advances at the timed cube pace, up to its share of the stage', () => {
    const t = new ProgressTracker(0);
    t.event({ stage: 'profile', plan: { passes: [] } }, 0);
    t.event({ stage: 'profile', done: true }, 0);
    t.event({ stage: 'cube', plan: { passes: ['cube'] } }, 0);
    t.event({ stage: 'cube', pass: 'cube' }, 0);
    const cells = 10_000; // 3 s of computing, 1.5 units
    t.event({ stage: 'cube', done: true, cells }, 2000); // a pass unit is 2 s
    t.event({ stage: 'tails', plan: { passes: [] } }, 2000);
    t.event({ stage: 'tails', done: true }, 2000);
    const start = t.event({ stage: 'checks', plan: { passes: ['examples'], cells } }, 2000).share;
    const total = PASS_COST.cube + PASS_COST.examples + (cells * CHECK_SECONDS_PER_CELL) / 2;
    expect(start).toBeCloseTo(PASS_COST.cube / total, 12);
    // one second in: half a unit computed
    expect(t.point(3000).share).toBeCloseTo((PASS_COST.cube + 0.5) / total, 12);
    // long past the expected 3 s: the computation counts 1.5 units, no more
    expect(t.point(60_000).share).toBeCloseTo((PASS_COST.cube + 1.5) / total, 12);
  });
});
