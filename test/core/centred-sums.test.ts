/**
 * Variances formed from cube sums stay accurate when the mean is large against the spread: the cube keeps
 * sums of d = r − shift (shift = the middle of the reward's range), and the on-policy value's SE is formed
 * from them. Reference: numpy's two-pass mean and variance of the same 10^7 values, mean/sd = 1e5
 * (test/reference/stats/make-centred.py → centred-variance.json).
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { total } from '../../app/core/cube/rollup.ts';
import { resolveRoles } from '../../app/core/roles/roles.ts';
import { cubeSql, parseCube, rewardShift } from '../../app/core/scan/cube.ts';
import { rowExpressions } from '../../app/core/scan/expressions.ts';
import { profileLog } from '../../app/core/scan/profile.ts';
import { onPolicyValue } from '../../app/core/stats/estimators.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';

const REF = JSON.parse(readFileSync(new URL('../reference/stats/centred-variance.json', import.meta.url), 'utf8')) as { n: number; mean: number; se_of_mean: number };

let engine: NativeEngine;
beforeAll(async () => {
  engine = await createNativeEngine();
  // the same IEEE operations as make-centred.py, row i = 0 .. n - 1
  await engine.query(`CREATE TABLE big AS SELECT ['north', 'south'][1 + i % 2] AS region, ['bakery', 'household', 'recipe-kit'][1 + i % 3] AS promotion,
      [0.25, 0.5][1 + (i // 7) % 2] AS propensity,
      1e5 + (CAST((i * 2654435761) % 4294967296 AS DOUBLE) / 4294967296.0 - 0.5) * sqrt(12) AS reward
    FROM range(${REF.n}) t(i)`);
}, 300_000);
afterAll(async () => engine?.close());

describe('centred reward sums at mean/sd = 1e5 over 10^7 rows', () => {
  it.each([true, false])('give numpy\'s two-pass SE of the mean to 1e-9 (propensity-grouped plan: %s)', async (byPropensity) => {
    const run = (sql: string) => engine.query(sql);
    const profile = await profileLog(run, 'big');
    const roles = resolveRoles(profile, { segments: ['region'], action: 'promotion', propensity: 'propensity', reward: 'reward' });
    const reward = rewardShift(profile.columns.find((c) => c.name === 'reward'));
    expect(reward).not.toBeNull();
    const cells = parseCube(await run(cubeSql({ relation: 'big', rows: rowExpressions(roles, profile, null), capped: [], cap: 50, floor: 0.01, byPropensity, reward, rowCount: profile.rows })), 1);
    const t = total(cells);
    expect(t.nRAll).toBe(REF.n);
    const centred = onPolicyValue(t.nRAll, t.sumRAll, t.sumR2All, { sumD: t.sumDAll, sumD2: t.sumD2All });
    const raw = onPolicyValue(t.nRAll, t.sumRAll, t.sumR2All);
    console.log(`SE of the mean: numpy ${REF.se_of_mean}, centred sums ${centred.se} (relative error ${Math.abs(centred.se - REF.se_of_mean) / REF.se_of_mean}), raw Σr² − (Σr)²/n ${raw.se} (${Math.abs(raw.se - REF.se_of_mean) / REF.se_of_mean})`);
    expect(Math.abs(centred.value - REF.mean) / REF.mean).toBeLessThan(1e-14);
    expect(Math.abs(centred.se - REF.se_of_mean) / REF.se_of_mean).toBeLessThan(1e-9);
  }, 300_000);
});
