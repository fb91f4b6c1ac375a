/**
 * The cube's measures table (app/core/cube/measures.ts) is the one list the query, the parser, the merge
 * and the Arrow layout come from. These cases hold the derived parts to the table: every column is found
 * by its name (a result or an Arrow table with its columns in another order reads the same), every field
 * of the table reaches a cell, merges by its rule and crosses Arrow.
 */
import { Table, tableFromIPC, tableToIPC, type Vector } from 'apache-arrow';
import { describe, expect, it } from 'vitest';
import { CELL_MEASURES, DERIVED_MEASURES, MAX_FIELDS, MIN_FIELDS, SUM_FIELDS, TARGET_FIELDS, TARGET_MEASURES } from '../../app/core/cube/measures.ts';
import { rollup, total } from '../../app/core/cube/rollup.ts';
import type { CubeCell } from '../../app/core/cube/types.ts';
import { cubeSql, parseCube } from '../../app/core/scan/cube.ts';
import type { RowExpressions } from '../../app/core/scan/expressions.ts';
import { duckdb } from '../../app/core/sql/dialect-duckdb.ts';
import type { Table as ResultTable } from '../../app/core/table.ts';
import { cubeFromArrowIpc, cubeToArrowIpc } from '../../app/engine/cube-arrow.ts';

const rows: RowExpressions = { segments: ['seg'], action: 'act', propensity: 'prop', reward: 'rew', bucket: '0', timeUs: null, timeColumn: null, version: null, targetPropensity: 'tq', decisionId: null, dialect: duckdb };

/** A cube result with two cells whose every measure column holds a distinct value. */
function result(order: (names: string[]) => string[]): ResultTable {
  const measures = [...CELL_MEASURES, ...TARGET_MEASURES];
  const names = order(['s0', 'a', 'v', 'b', ...measures.map((m) => m.column)]);
  const value = (name: string, i: number): unknown => {
    if (name === 's0') return ['north', 'south'][i];
    if (name === 'a') return ['bakery', 'household'][i];
    if (name === 'v') return ['v7', 'v8'][i];
    if (name === 'b') return i;
    return 1 + measures.findIndex((m) => m.column === name) + 100 * i;
  };
  return { names, columns: names.map((n) => [value(n, 0), value(n, 1)]), rowCount: 2 } as unknown as ResultTable;
}

describe('the cube measures table', () => {
  it('has one field and one column per measure', () => {
    const fields = [...CELL_MEASURES.map((m) => m.field), ...DERIVED_MEASURES.map((d) => d.field)];
    expect(new Set(fields).size).toBe(fields.length);
    const columns = [...CELL_MEASURES, ...TARGET_MEASURES].map((m) => m.column);
    expect(new Set(columns).size).toBe(columns.length);
    expect(new Set([...SUM_FIELDS, ...MIN_FIELDS, ...MAX_FIELDS])).toEqual(new Set(fields));
  });

  it('writes every measure into the cube query, by its column name', () => {
    const sql = cubeSql({ relation: 'log', rows, capped: [0], cap: 3, floor: 0.01 });
    for (const m of [...CELL_MEASURES, ...TARGET_MEASURES]) expect(sql).toContain(`AS ${m.column}`);
  });

  it('parses a result by column name: reversed columns give the same cells', () => {
    const a = parseCube(result((n) => n), 1);
    const b = parseCube(result((n) => [...n].reverse()), 1);
    expect(b).toStrictEqual(a);
    CELL_MEASURES.forEach((m, k) => expect(a[1]?.[m.field], m.field).toBe(1 + k + 100));
    TARGET_MEASURES.forEach((m, k) => expect(a[0]?.target?.[m.field], m.field).toBe(1 + CELL_MEASURES.length + k));
    expect(a[0]?.nPInvalid).toBe(DERIVED_MEASURES[0].of.reduce((s, f) => s + (a[0]?.[f] as number), 0));
  });

  it('merges every field by its rule', () => {
    const cells = parseCube(result((n) => n), 1);
    const [x, y] = cells as [CubeCell, CubeCell];
    const t = total(cells);
    for (const f of SUM_FIELDS) expect(t[f], f).toBe(x[f] + y[f]);
    for (const f of MIN_FIELDS) expect(t[f], f).toBe(Math.min(x[f] as number, y[f] as number));
    for (const f of MAX_FIELDS) expect(t[f], f).toBe(Math.max(x[f] as number, y[f] as number));
    for (const f of TARGET_FIELDS) expect(t.target?.[f], f).toBe((x.target?.[f] as number) + (y.target?.[f] as number));
    const groups = rollup(cells, (c) => c.action, (c) => c.action);
    expect(groups.map((g) => g.totals)).toStrictEqual(cells.map((c) => total([c])));
  });

  it('crosses Arrow by column name: an IPC table with its columns reordered reads the same cells', () => {
    const cells = parseCube(result((n) => n), 1);
    const bytes = cubeToArrowIpc(cells);
    const table = tableFromIPC(bytes);
    const names = table.schema.fields.map((f) => f.name);
    for (const f of [...SUM_FIELDS, ...MIN_FIELDS, ...MAX_FIELDS]) expect(names).toContain(f);
    for (const f of TARGET_FIELDS) expect(names).toContain(`target_${f}`);
    const reordered: Record<string, Vector> = {};
    for (const n of [...names].reverse()) reordered[n] = table.getChild(n) as Vector;
    expect(cubeFromArrowIpc(tableToIPC(new Table(reordered), 'stream'))).toStrictEqual(cells);
  });

  it('refuses an Arrow cube that lacks one measure, naming it', () => {
    const table = tableFromIPC(cubeToArrowIpc(parseCube(result((n) => n), 1)));
    const columns: Record<string, Vector> = {};
    for (const f of table.schema.fields) if (f.name !== 'sumR2InvP2') columns[f.name] = table.getChild(f.name) as Vector;
    expect(() => cubeFromArrowIpc(tableToIPC(new Table(columns), 'stream'))).toThrow(/no column "sumR2InvP2"/);
  });
});

describe('each measure\'s in-memory term (the per-check test builder\'s) answers what its SQL answers', () => {
  // Rows covering every row set: null, NaN, non-positive, > 1, below-floor and valid propensities, with missing,
  // non-finite and finite rewards.
  const ps = [null, Number.NaN, -0.1, 0, 0.005, 0.2, 0.5, 1, 1.2];
  const rs = [null, Number.NaN, Infinity, 0, 1, 2.5, -3];
  const rows = ps.flatMap((p) => rs.map((r) => ({ p, r, d: r })));
  const x = { floor: 0.01, d: duckdb };
  const lit = (v: number | null) => (v === null ? 'NULL' : Number.isNaN(v) ? "'NaN'::DOUBLE" : v === Infinity ? "'Infinity'::DOUBLE" : `${v}::DOUBLE`);
  const values = rows.map((row) => `(${lit(row.p)}, ${lit(row.r)}, ${lit(row.d)})`).join(', ');

  it.each(CELL_MEASURES.map((m) => [m.field, m] as const))('%s', async (_, m) => {
    const { createNativeEngine } = await import('../../app/engine/native.ts');
    const engine = await createNativeEngine();
    try {
      const a = m.rows(x);
      const [fn, term] = 'sum' in a ? ['sum', a.sum] : 'min' in a ? ['min', a.min] : ['max', a.max];
      const where = a.where ?? 'TRUE';
      const t = await engine.query(`SELECT ${fn}((${term})::DOUBLE) FILTER (WHERE coalesce(${where}, false)) AS v FROM (VALUES ${values}) AS t(p, r, d)`);
      const terms = rows.map((row) => m.term(row, x)).filter((v): v is number => v !== null);
      const expected = terms.length === 0 ? null : m.merge === 'sum' ? terms.reduce((s, v) => s + v, 0) : m.merge === 'min' ? Math.min(...terms) : Math.max(...terms);
      const got = t.columns[0]?.[0] ?? null;
      if (expected === null || got === null) expect(got).toBe(m.merge === 'sum' && expected === null ? null : expected);
      else expect(got as number).toBeCloseTo(expected, 9);
    } finally {
      await engine.close();
    }
  });
});
