/** The page's cube session: the cube loaded as table `cube`, and the segment map answered by SQL over it. */
import { describe, expect, it } from 'vitest';
import type { CubeCell } from '../../app/core/cube/types.ts';
import { segmentMap } from '../../app/core/segment-map.ts';
import { cubeToArrowIpc } from '../../app/engine/cube-arrow.ts';
import { loadCubeSession } from '../../renderer/engine/cube-session.ts';
import { createNodeArrowTables } from '../engine/wasm-tables.ts';
import { cubeCell } from '../fixtures/cube-cell.ts';

const cell = (segment: string[], action: string, version: string, n: number, p: number): CubeCell => cubeCell({
  segment, action, version, bucket: 0, n, nPNull: 0, nPNaN: 0, nPNonPositive: 0, nPAboveOne: 0, nPBelowFloor: 0, nPInvalid: 0, nPOne: p === 1 ? n : 0, nRNull: 0,
  nP: n, sumInvP: n / p, sumInvP2: n / (p * p), minP: p, maxP: p, nRw: n, sumInvPRw: n / p, sumInvP2Rw: n / (p * p), sumR: 0, sumR2: 0,
  sumRInvP: 0, sumRInvP2: 0, sumR2InvP2: 0, nRAll: n, sumRAll: 0, sumR2All: 0, sumD: 0, sumD2: 0, sumDInvP: 0, sumDInvP2: 0, sumD2InvP: 0, sumD2InvP2: 0, sumDAll: 0, sumD2All: 0, target: null,
});

describe('loadCubeSession', () => {
  it('answers regroups from the worker table and counts the statements it ran', async () => {
    const cells = [
      cell(['old-town', 'web'], 'free-delivery', 'v7', 40, 1),
      cell(['old-town', 'ios'], 'bakery', 'v7', 10, 0.5),
      cell(['old-town', 'ios'], 'free-delivery', 'v8', 10, 0.5),
      cell(['riverside', 'web'], 'bakery', 'v8', 7, 0.25),
    ];
    const tables = await createNodeArrowTables();
    try {
      const session = await loadCubeSession(tables, cubeToArrowIpc(cells), cells, ['region', 'device']);
      expect(session.versions).toEqual(['v7', 'v8']);
      expect(session.queriesRun).toBe(0);
      const layers = await session.segmentMap(['region']);
      expect(layers).toEqual(segmentMap(cells, ['region', 'device'], ['region']));
      const layer = (unit: string, of = layers) => of.find((s) => s.unit === unit);
      const rows = layer('rows');
      // Hand count: old-town logs 40 + 10 free-delivery and 10 bakery; riverside 7 bakery.
      expect(rows?.y).toEqual(['old-town', 'riverside']);
      expect(rows?.x).toEqual(['bakery', 'free-delivery']);
      expect(rows?.values).toEqual([[10, 50], [7, 0]]);
      // the exploration layer the map opens on: each action's share of its group's rows (10/60, 50/60; 7/7), never-logged cells null
      expect(layers[0]?.unit).toBe("share of the segment's rows");
      expect(layers[0]?.values).toEqual([[10 / 60, 50 / 60], [1, null]]);
      expect(layer('propensity')?.values).toEqual([[0.5, 0.5], [0.25, null]]);
      const v8 = layer('rows', await session.segmentMap(['device'], { versions: ['v8'] }));
      expect(v8?.values).toEqual([[0, 10], [7, 0]]);
      expect(session.queriesRun).toBe(2);
    } finally {
      tables.close();
    }
  });
});
