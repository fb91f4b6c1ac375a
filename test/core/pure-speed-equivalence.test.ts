/**
 * The fast paths of the cube's pure part give exactly (bit for bit) what their plain definitions give:
 * merging in place versus folding addInto, shared keys versus joining each cell's values, balance.weights'
 * packed cause search versus reading every test's group cell by cell.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAuditDetailed } from '../../app/core/audit.ts';
import type { AuditContext } from '../../app/core/checks/context.ts';
import { checkBalance } from '../../app/core/checks/balance-weights.ts';
import { checkPolicyDrift } from '../../app/core/checks/drift-policy.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { FIXED_NOW, SAMPLE, V9, v9Target } from './audit-helpers.ts';
import { contextOf, type Rows } from './checks/build.ts';
import { addInto, cellKey, cellKeys, emptyTotals, pairKeys, rollup, segmentKey, SEP, total, type Totals } from '../../app/core/cube/rollup.ts';
import type { CubeCell, TargetColumnSums } from '../../app/core/cube/types.ts';
import { cubeCell } from '../fixtures/cube-cell.ts';
import { cubeView } from '../../app/core/targets/analysis.ts';

function seeded(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

/** Cells with sums of mixed magnitudes, so a change of summation order would change the last bits. */
function cells(count: number, withTarget: boolean, seed = 7): CubeCell[] {
  const r = seeded(seed);
  const pick = <T>(xs: readonly T[]) => xs[Math.floor(r() * xs.length)] as T;
  const sum = () => (r() < 0.5 ? r() * 1e-3 : r() * 1e6) + r();
  return Array.from({ length: count }, (): CubeCell => {
    const target: TargetColumnSums | null = withTarget && r() < 0.8 ? { nInvalid: 1, sumW: sum(), sumW2: sum(), sumWRw: sum(), sumW2Rw: sum(), sumWR: sum(), sumW2R: sum(), sumW2R2: sum() } : null;
    const p = r() < 0.1 ? null : r();
    return cubeCell({
      // a value holding the separator makes two different segments join to the same key
      segment: [pick(['north', 'south', `a${SEP}b`, 'a']), pick(['ios', 'web', `b${SEP}ios`])],
      action: pick(['free-delivery', 'bundle', '10-off']),
      bucket: Math.floor(r() * 5),
      version: pick(['v7', 'v8']),
      n: 10, nPNull: 1, nPNaN: 0, nPNonPositive: 1, nPAboveOne: 0, nPBelowFloor: 1, nPInvalid: 2, nPOne: 1, nRNull: 1, nP: 8,
      sumInvP: sum(), sumInvP2: sum(), minP: p, maxP: p === null ? null : Math.min(1, p + r()),
      nRw: 7, sumInvPRw: sum(), sumInvP2Rw: sum(), sumR: sum(), sumR2: sum(), sumRInvP: sum(), sumRInvP2: sum(), sumR2InvP2: sum(),
      nRAll: 9, sumRAll: sum(), sumR2All: sum(), sumD: sum(), sumD2: sum(), sumDInvP: sum(), sumDInvP2: sum(), sumD2InvP: sum(), sumD2InvP2: sum(), sumDAll: sum(), sumD2All: sum(), target,
    });
  });
}

const fold = (cs: readonly CubeCell[]): Totals => cs.reduce<Totals>((acc, c) => addInto(acc, c), emptyTotals(cs.some((c) => c.target !== null)));

describe('merging cube cells in place', () => {
  it.each([false, true])('total equals the left fold of addInto, bit for bit (target column: %s)', (withTarget) => {
    const cs = cells(500, withTarget);
    expect(JSON.stringify(total(cs))).toBe(JSON.stringify(fold(cs)));
  });

  it('rollup gives each group the left fold of its cells, groups in first-seen order', () => {
    const cs = cells(800, true, 11);
    const groups = rollup(cs, (c) => c.action, (c) => c.action);
    const firstSeen = [...new Set(cs.map((c) => c.action))];
    expect(groups.map((g) => g.key)).toEqual(firstSeen);
    for (const g of groups) expect(JSON.stringify(g.totals)).toBe(JSON.stringify(fold(cs.filter((c) => c.action === g.key))));
  });

  it('leaves its inputs unchanged', () => {
    const cs = cells(50, true, 3);
    const before = JSON.stringify(cs);
    total(cs);
    rollup(cs, (c) => c.version, () => null);
    addInto(cs[0] as CubeCell, cs[1] as CubeCell);
    expect(JSON.stringify(cs)).toBe(before);
  });
});

describe('shared keys', () => {
  it('cellKeys gives segmentKey and cellKey of every cell, including segments whose values hold the separator', () => {
    const cs = cells(400, false, 5);
    const keys = cellKeys(cs);
    expect(keys.segment).toEqual(cs.map((c) => segmentKey(c.segment)));
    expect(keys.cell).toEqual(cs.map(cellKey));
    // ['a␟b', 'ios'] and ['a', 'b␟ios'] join to the same key, as they always have
    expect(new Set(keys.segment).size).toBeLessThan(new Set(cs.map((c) => JSON.stringify(c.segment))).size);
  });

  it('pairKeys returns what its key function returns, built once per pair', () => {
    let built = 0;
    const key = pairKeys((a, b) => {
      built++;
      return `${a}${SEP}${b}`;
    });
    const pairs = [['north', 'v7'], ['north', 'v8'], ['north', 'v7'], [`a${SEP}b`, 'c'], ['a', `b${SEP}c`]] as const;
    expect(pairs.map(([a, b]) => key(a, b))).toEqual(pairs.map(([a, b]) => `${a}${SEP}${b}`));
    expect(built).toBe(4);
  });

  it('the view answers segmentKeyOf and total for its cube', () => {
    const cs = cells(300, true, 9);
    const view = cubeView(cs, ['region', 'device']);
    expect(cs.map(view.segmentKeyOf)).toEqual(cs.map((c) => segmentKey(c.segment)));
    expect(JSON.stringify(view.total)).toBe(JSON.stringify(fold(cs)));
  });
});

/** balance.weights on one context, fast path and plain definition, as JSON (every number's every bit). */
const both = (ctx: AuditContext) => ({ fast: JSON.stringify(checkBalance(ctx)), plain: JSON.stringify(checkBalance(ctx, true)) });

describe('balance.weights\' packed cause search and drift.policy\'s indexed groups give what the plain definitions do', () => {
  let engine: Engine;
  const contexts = new Map<string, AuditContext>();
  beforeAll(async () => {
    engine = await createNativeEngine();
    // the demo and the next week (each with its planted defects), with the v9 table target and with v9 as a per-row column
    await engine.query(`CREATE TABLE log_q AS SELECT d.*, v.probability AS target_prob FROM read_parquet('${SAMPLE}maple-row-demo.parquet') d
      LEFT JOIN read_csv('${V9}') v ON d.region = v.region AND d.device = v.device AND d.tenure = v.tenure AND d.promotion = v.promotion`);
    const audit = async (name: string, relation: string, targets: Parameters<typeof runAuditDetailed>[1]['targets']) => {
      contexts.set(name, (await runAuditDetailed((q) => engine.query(q), { relation, input: { files: [], format: 'parquet' }, engine: 'native', now: FIXED_NOW, targets })).context);
    };
    await audit('demo, v9 table', `read_parquet('${SAMPLE}maple-row-demo.parquet')`, [v9Target()]);
    await audit('demo, default targets', `read_parquet('${SAMPLE}maple-row-demo.parquet')`, undefined);
    await audit('demo, v9 column', 'log_q', [{ spec: 'column:target_prob' }]);
    await audit('next week, v9 table', `read_parquet('${SAMPLE}maple-row-next.parquet')`, [v9Target()]);
  }, 120_000);
  afterAll(async () => engine?.close());

  it.each(['demo, v9 table', 'demo, default targets', 'demo, v9 column', 'next week, v9 table'])('%s: the same result, and the search had causes to weigh', (name) => {
    const ctx = contexts.get(name) as AuditContext;
    const { fast, plain } = both(ctx);
    expect(fast).toBe(plain);
    expect(JSON.stringify(checkPolicyDrift(ctx))).toBe(JSON.stringify(checkPolicyDrift(ctx, true)));
    // not a vacuous comparison: the planted defects fail, and the search names groups that account for other tests
    const r = checkBalance(ctx);
    expect(r.status).toBe('fail');
    expect(r.findings.some((f) => typeof f.metrics.accounts_for === 'number' && f.metrics.accounts_for > 1)).toBe(true);
  });

  /**
   * Ties at every step of the search: 4 regions × 3 devices × 10 days, versions v1 (days 0–4) and v2; actions a, b, c.
   * Under v2 a's propensity is logged halved and c's doubled everywhere (two actions of one group fail together, so
   * a × v2 and c × v2 explain the same tests with the same rows and the larger deviation decides), and region r2 logs
   * a halved under both versions (r2 and r2 × v1 then account for the same rows: the wider group decides). Rows are
   * otherwise exactly as expected.
   */
  const ties = (): Rows[] => {
    const rows: Rows[] = [];
    for (let d = 0; d < 10; d++) for (const r of ['r1', 'r2', 'r3', 'r4']) for (const v of ['d1', 'd2', 'd3']) {
      const version = d < 5 ? 'v1' : 'v2';
      const a = version === 'v2' || r === 'r2' ? 0.1 : 0.2;
      rows.push({ segment: [r, v], action: 'a', bucket: d, version, p: a, r: 1, count: 40 });
      rows.push({ segment: [r, v], action: 'b', bucket: d, version, p: 0.6, r: 0, count: 120 });
      rows.push({ segment: [r, v], action: 'c', bucket: d, version, p: version === 'v2' ? 0.4 : 0.2, r: 1, count: 40 });
    }
    return rows;
  };

  it.each([
    { name: 'uniform and always targets', targets: undefined },
    { name: 'a table target', targets: [{ spec: 'table:inline', tableText: 'region,device,action,probability\nr1,d1,a,1\nr2,d1,b,1\nr3,d2,c,0.5\nr3,d2,a,0.5\n' }] },
  ])('hand-built ties ($name): the same result, with tied candidates in the search', ({ targets }) => {
    const ctx = contextOf(ties(), { days: 10, versions: true, segmentColumns: ['region', 'device'], ...(targets ? { targets } : {}) });
    const { fast, plain } = both(ctx);
    expect(fast).toBe(plain);
    expect(JSON.stringify(checkPolicyDrift(ctx))).toBe(JSON.stringify(checkPolicyDrift(ctx, true)));
    const r = checkBalance(ctx);
    expect(r.status).toBe('fail');
    expect(r.metrics.groups as number).toBeGreaterThan(1);
  });
});
