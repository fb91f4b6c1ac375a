/**
 * The segment map regrouped by SQL over the cube table (what the page runs in its DuckDB-Wasm worker)
 * against the page's own regroup of the same cells (app/core/segment-map.ts), on the demo log's real cube.
 * The SQL runs in DuckDB-Wasm's Node build after loading the cube's Arrow IPC, as the page does.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAuditDetailed } from '../../app/core/audit.ts';
import { filterCells, type CubeFilter } from '../../app/core/cube/filter.ts';
import { parseRegroup, regroupSql } from '../../app/core/cube/regroup-sql.ts';
import type { CubeCell } from '../../app/core/cube/types.ts';
import type { Series } from '../../app/core/model/report.ts';
import { segmentMap, segmentMapSeries } from '../../app/core/segment-map.ts';
import { cubeToArrowIpc } from '../../app/engine/cube-arrow.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { createNodeArrowTables } from '../engine/wasm-tables.ts';
import { FIXED_NOW, SAMPLE } from './audit-helpers.ts';

let cells: CubeCell[] = [];
let segments: string[] = [];
let tables: Awaited<ReturnType<typeof createNodeArrowTables>>;

beforeAll(async () => {
  const engine = await createNativeEngine({ threads: 1 });
  try {
    const src = await engine.register({ kind: 'path', paths: [`${SAMPLE}maple-row-demo.parquet`] });
    const audit = await runAuditDetailed((q) => engine.query(q), { relation: src.relation, input: { files: [], format: src.format }, engine: 'native', now: FIXED_NOW });
    cells = [...audit.cells];
    segments = [...audit.report.roles.segments];
  } finally {
    await engine.close();
  }
  tables = await createNodeArrowTables();
  await tables.load('cube', cubeToArrowIpc(cells));
});
afterAll(() => tables?.close());

/** Counts and minima are exact either way; the z of a DOUBLE sum may differ in the last bits with the order of addition. */
function expectSameMap(sql: readonly Series[], page: readonly Series[]): void {
  expect(sql.map((s) => [s.name, s.x, s.y])).toEqual(page.map((s) => [s.name, s.x, s.y]));
  const [rows, minP, z] = sql;
  expect(rows?.values).toEqual(page[0]?.values);
  expect(minP?.values).toEqual(page[1]?.values);
  z?.values.forEach((row, i) => row.forEach((v, j) => {
    const w = page[2]?.values[i]?.[j] ?? null;
    if (v === null || w === null) expect(v).toBe(w);
    else expect(Math.abs(v - w)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(w)));
  }));
}

describe('regroup SQL over the cube table', () => {
  it.each([
    [[], {}],
    [['device'], {}],
    [['region', 'device'], {}],
    [['region', 'device', 'tenure'], {}],
    [['tenure'], { versions: ['v8'] }],
    [['region', 'device', 'tenure'], { versions: ['v7'] }],
    [['region'], { actions: ['bakery', 'household'] }],
    [['device'], { versions: ['v8'], actions: ['free-delivery'] }],
    [['device'], { versions: [] }],
  ] as [string[], CubeFilter][])('by %j with filter %j equals the page\'s regroup of the same cells', async (groupBy, filter) => {
    const t = await tables.query(regroupSql({ table: 'cube', segmentColumns: segments, groupBy, filter }));
    const page = segmentMap(filterCells(cells, filter), segments, groupBy);
    expectSameMap(segmentMapSeries(parseRegroup(t, groupBy), groupBy), page);
    if (filter.versions?.length === 0) expect(page[0]?.y).toEqual([]);
    else expect(page[0]?.y?.length).toBeGreaterThan(0);
  });

  it('keeps the unexplored (old-town, web) group with free-delivery its only logged action', async () => {
    const t = await tables.query(regroupSql({ table: 'cube', segmentColumns: segments, groupBy: ['region', 'device'] }));
    const [rows] = segmentMapSeries(parseRegroup(t, ['region', 'device']), ['region', 'device']);
    const r = rows?.y?.indexOf('old-town · web') ?? -1;
    expect(rows?.x.filter((_, j) => (rows.values[r]?.[j] as number) > 0)).toEqual(['free-delivery']);
  });

  it('quotes every identifier and literal', () => {
    const sql = regroupSql({ table: 'cube', segmentColumns: ['region', 'device'], groupBy: ['device'], filter: { versions: ["v8's"], actions: [] } });
    expect(sql).toBe([
      'SELECT "segment"[2] AS "g0", "action", sum("n") AS "n", sum("nP") AS "nP", sum("sumInvP") AS "sumInvP", sum("sumInvP2") AS "sumInvP2", min("minP") AS "minP"',
      'FROM "cube"',
      `WHERE "version" IN ('v8''s') AND false`,
      'GROUP BY "g0", "action"',
    ].join('\n'));
  });

  it('refuses a column that is not a segment of the audit', () => {
    expect(() => regroupSql({ table: 'cube', segmentColumns: segments, groupBy: ['basket_value'] })).toThrow(/not a segment column/);
  });
});
