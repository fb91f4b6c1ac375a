/**
 * IPS, SNIPS and doubly robust standard errors from the cube's centred sums, at a reward mean/sd of 1e5 over
 * 10^6 rows, against numpy's row-by-row two-pass values (test/reference/stats/make-estimators.py →
 * estimators.json, "large"; the same IEEE operations build the rows here in DuckDB). Formed from the plain
 * sums, Σx² − (Σx)²/n cancels: the test prints that error beside the centred one.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { EstimatorCell } from '../../app/core/cube/types.ts';
import { resolveRoles } from '../../app/core/roles/roles.ts';
import { cubeSql, parseCube, rewardShift } from '../../app/core/scan/cube.ts';
import { rowExpressions } from '../../app/core/scan/expressions.ts';
import { profileLog } from '../../app/core/scan/profile.ts';
import { doublyRobust, ips, snips, type Estimate } from '../../app/core/stats/estimators.ts';
import { analyseTarget, cubeView } from '../../app/core/targets/analysis.ts';
import { parseTarget } from '../../app/core/targets/targets.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';

interface Ref { value: number; se: number }
const REF = JSON.parse(readFileSync(new URL('../reference/stats/estimators.json', import.meta.url), 'utf8')) as { large: { n: number } & Record<'uniform' | 'always:a0', Record<'ips' | 'snips' | 'dr', Ref>> };

let engine: NativeEngine;
beforeAll(async () => {
  engine = await createNativeEngine();
  await engine.query(`CREATE TABLE big AS SELECT 's' || (i % 3) AS segment, 'a' || ((i * 2246822519) % 4294967296) // 1073741824 AS action, 0.25 AS propensity,
      1e5 + (CAST((i * 2654435761) % 4294967296 AS DOUBLE) / 4294967296.0 - 0.5) * sqrt(12) + 0.5 * CAST(((i * 2246822519) % 4294967296) // 1073741824 AS DOUBLE) AS reward
    FROM range(${REF.large.n}) t(i)`);
}, 300_000);
afterAll(async () => engine?.close());

const relative = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
const plain = (cells: readonly EstimatorCell[]) => cells.map(({ centred: _c, ...rest }) => rest);

describe('IPS, SNIPS and DR standard errors at mean/sd = 1e5 over 10^6 rows', () => {
  it.each(['uniform', 'always:a0'] as const)('from centred sums they match numpy\'s two-pass values to 1e-9 (target %s)', async (spec) => {
    const run = (sql: string) => engine.query(sql);
    const profile = await profileLog(run, 'big');
    const roles = resolveRoles(profile, { segments: ['segment'], action: 'action', propensity: 'propensity', reward: 'reward' });
    const reward = rewardShift(profile.columns.find((c) => c.name === 'reward'));
    const cells = parseCube(await run(cubeSql({ relation: 'big', rows: rowExpressions(roles, profile, null), capped: [], cap: 50, floor: 0.01, byPropensity: true, reward, rowCount: profile.rows })), 1);
    const view = cubeView(cells, ['segment']);
    const t = analyseTarget(parseTarget({ spec }, { actionColumn: 'action', logColumns: ['segment', 'action', 'propensity', 'reward'], targetColumn: null }), view);
    const q = t.q!;
    const estimate = (c: readonly EstimatorCell[]): Record<'ips' | 'snips' | 'dr', Estimate> => ({
      ips: ips(c, REF.large.n), snips: snips(c), dr: doublyRobust(c, (key, a) => q([key], a) ?? 0, t.actions),
    });
    const centred = estimate(t.estimatorCells);
    const raw = estimate(plain(t.estimatorCells));
    const ref = REF.large[spec];
    console.log(`${spec}: ` + (['ips', 'snips', 'dr'] as const).map((k) => `${k} SE numpy ${ref[k].se}, centred ${centred[k].se} (relative error ${relative(centred[k].se, ref[k].se).toExponential(2)}), plain sums ${raw[k].se} (${relative(raw[k].se, ref[k].se).toExponential(2)})`).join('; '));
    for (const k of ['ips', 'snips', 'dr'] as const) {
      expect(relative(centred[k].value, ref[k].value), `${k} value`).toBeLessThan(1e-13);
      expect(relative(centred[k].se, ref[k].se), `${k} SE`).toBeLessThan(1e-9);
    }
    // the plain sums' error where the weights leave the reward's large mean in every term (SNIPS, DR; IPS under uniform, w = 1)
    for (const k of spec === 'uniform' ? (['ips', 'snips', 'dr'] as const) : (['snips', 'dr'] as const)) expect(relative(raw[k].se, ref[k].se), `${k} plain-sum SE`).toBeGreaterThan(1e-8);
  }, 300_000);
});
