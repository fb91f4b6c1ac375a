/**
 * The cube as Arrow IPC: what the engine host sends and the page's DuckDB-Wasm loads. The outside reference
 * is apache-arrow's own reader and DuckDB-Wasm's Arrow import: the bytes must decode to the very cells the
 * native audit computed, and DuckDB must read the same values back.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { makeVector, Table, tableFromIPC, tableToIPC, Utf8, vectorFromArray, type Vector } from 'apache-arrow';
import { runAuditDetailed } from '../../app/core/audit.ts';
import type { CubeCell } from '../../app/core/cube/types.ts';
import { cubeCell } from '../fixtures/cube-cell.ts';
import { cubeFromArrowIpc, cubeToArrowIpc, CUBE_NUMBER_FIELDS } from '../../app/engine/cube-arrow.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { FIXED_NOW, SAMPLE, v9Target } from '../core/audit-helpers.ts';
import { createNodeArrowTables } from './wasm-tables.ts';

let demo: CubeCell[] = [];

beforeAll(async () => {
  const engine = await createNativeEngine({ threads: 1 });
  try {
    const src = await engine.register({ kind: 'path', paths: [`${SAMPLE}maple-row-demo.parquet`] });
    demo = [...(await runAuditDetailed((q) => engine.query(q), { relation: src.relation, input: { files: [], format: src.format }, engine: 'native', targets: [v9Target()], now: FIXED_NOW })).cells];
  } finally {
    await engine.close();
  }
});

const base: CubeCell = cubeCell({
  segment: ['old-town', 'web', 'new'], action: 'bakery', bucket: 3, version: 'v8', n: 4, nPNull: 0, nPNaN: 0, nPNonPositive: 0, nPAboveOne: 0, nPBelowFloor: 0,
  nPInvalid: 0, nPOne: 0, nRNull: 0, nP: 4, sumInvP: 40, sumInvP2: 400, minP: 0.1, maxP: 0.1, nRw: 4, sumInvPRw: 40, sumInvP2Rw: 400, sumR: 1, sumR2: 1,
  sumRInvP: 10, sumRInvP2: 100, sumR2InvP2: 100, nRAll: 4, sumRAll: 1, sumR2All: 1, sumD: 0.5, sumD2: 0.25, sumDInvP: 5, sumDInvP2: 50, sumD2InvP: 2.5, sumD2InvP2: 25, sumDAll: 0.5, sumD2All: 0.25, target: null,
});

describe('cube ⇄ Arrow IPC', () => {
  it('returns the demo log\'s cube exactly, cell for cell and field for field', () => {
    expect(demo.length).toBeGreaterThan(10_000);
    const bytes = cubeToArrowIpc(demo);
    const back = cubeFromArrowIpc(bytes);
    expect(back).toStrictEqual(demo);
    console.log(`demo cube: ${demo.length} cells, ${bytes.byteLength} bytes of Arrow IPC`);
  });

  it('keeps NaN, ±Infinity, -0, nulls, counts past 2^53, target sums and non-ASCII labels', () => {
    const cells: CubeCell[] = [
      { ...base, sumInvP: NaN, sumInvP2: Infinity, sumR: -Infinity, sumRAll: -0, minP: null, maxP: null },
      { ...base, n: 2 ** 53 + 2, nP: Number.MAX_VALUE, segment: ['Zürich · 北', '', '(null)'], action: '(other)', version: '' },
      { ...base, target: { nInvalid: 1, sumW: NaN, sumW2: Infinity, sumWRw: -0, sumW2Rw: 2, sumWR: 3, sumW2R: 4, sumW2R2: 5 } },
    ];
    const back = cubeFromArrowIpc(cubeToArrowIpc(cells));
    expect(back).toStrictEqual(cells);
    expect(Object.is(back[0]?.sumRAll, -0)).toBe(true);
    expect(Object.is(back[2]?.target?.sumWRw, -0)).toBe(true);
    expect(back[1]?.n).toBe(9007199254740994);
  });

  it('keeps a cube with no segment columns, and an empty cube', () => {
    const cells = [{ ...base, segment: [] }, { ...base, segment: [], action: 'household' }];
    expect(cubeFromArrowIpc(cubeToArrowIpc(cells))).toStrictEqual(cells);
    expect(cubeFromArrowIpc(cubeToArrowIpc([]))).toStrictEqual([]);
  });

  it.each([
    ['bytes that are not Arrow', () => new TextEncoder().encode('not arrow at all'), /not an Arrow IPC stream/],
    ['a table without the cube\'s columns', () => tableToIPC(new Table({ x: makeVector(new Float64Array([1])) }), 'stream'), /no column "segment"/],
    ['a count stored as text', () => withColumnReplaced(cubeToArrowIpc([base]), 'nP', vectorFromArray(['4'], new Utf8())), /column "nP" is Utf8, not Float/],
  ] as const)('refuses %s with the reason', (_what, bytes, message) => {
    expect(() => cubeFromArrowIpc(bytes())).toThrow(message);
  });

  it('is read by DuckDB-Wasm as table cube with the same values', async () => {
    const tables = await createNodeArrowTables();
    try {
      await tables.load('cube', cubeToArrowIpc(demo));
      const t = await tables.query(`SELECT count(*)::DOUBLE AS cells, sum(n) AS n, sum(sumInvP) AS s, count(minP) AS with_min, max(len(segment)) AS k FROM cube`);
      const [cells, n, s, withMin, k] = t.columns.map((c) => c[0]);
      expect(cells).toBe(demo.length);
      expect(n).toBe(demo.reduce((a, c) => a + c.n, 0));
      expect(Math.abs((s as number) - demo.reduce((a, c) => a + c.sumInvP, 0))).toBeLessThan(1e-9 * (s as number));
      expect(Number(withMin)).toBe(demo.filter((c) => c.minP !== null).length);
      expect(Number(k)).toBe(demo[0]?.segment.length);
      const types = await tables.query('DESCRIBE cube');
      const typeOf = new Map((types.columns[0] ?? []).map((name, i) => [name, types.columns[1]?.[i]]));
      expect(typeOf.get('segment')).toBe('VARCHAR[]');
      for (const f of CUBE_NUMBER_FIELDS) expect(typeOf.get(f), f).toBe('DOUBLE');
    } finally {
      tables.close();
    }
  });
});

/** The cube's IPC with one column swapped for another vector (a producer that wrote the wrong type). */
function withColumnReplaced(bytes: Uint8Array, name: string, vector: Vector): Uint8Array {
  const table = tableFromIPC(bytes);
  const columns: Record<string, Vector> = {};
  for (const field of table.schema.fields) columns[field.name] = field.name === name ? vector : (table.getChild(field.name) as Vector);
  return tableToIPC(new Table(columns), 'stream');
}
