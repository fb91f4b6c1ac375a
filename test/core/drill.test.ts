/**
 * Row drill-down SQL, checked against DuckDB itself: the pages of a cell, concatenated, are exactly the
 * rows one plain ordered query returns (no row lost or repeated at a page boundary, also where a boundary
 * splits two identical rows), and the count query agrees with the cube and with the generator's manifest.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAuditDetailed, type AuditResult } from '../../app/core/audit.ts';
import { cubeSql, parseCube } from '../../app/core/scan/cube.ts';
import { cursorAfter, DRILL_PAGE_ROWS, drillOrderColumns, drillCountSql, drillPageSql, drillSql, findingWhere, keyLiteral, parseDrillCount, ROW_HASH, type DrillCursor, type DrillSpec } from '../../app/core/scan/drill.ts';
import { rowExpressions } from '../../app/core/scan/expressions.ts';
import { describeSql, parseDescribe, parseProfile, profileSql } from '../../app/core/scan/profile.ts';
import { resolveRoles } from '../../app/core/roles/roles.ts';
import { rowObjects, type Table } from '../../app/core/table.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { FIXED_NOW, SAMPLE } from './audit-helpers.ts';

interface Manifest { defects: { kind: string; segment: Record<string, string>; action?: string; rows_affected?: number }[] }
const manifest = JSON.parse(readFileSync(`${SAMPLE}maple-row-demo.manifest.json`, 'utf8')) as Manifest;
// The generator's own record of the unexplored cell: old-town on web always shows free-delivery.
const unexplored = manifest.defects.find((d) => d.kind === 'propensity.exploration');

let engine: Engine;
let audit: AuditResult;
let relation = '';

const json = (rows: unknown) => JSON.stringify(rows, (_k, v: unknown) => (typeof v === 'bigint' ? `${v}n` : v));

beforeAll(async () => {
  engine = await createNativeEngine();
  relation = (await engine.register({ kind: 'path', paths: [`${SAMPLE}maple-row-demo.parquet`] })).relation;
  audit = await runAuditDetailed((q) => engine.query(q), { relation, input: { files: [], format: 'parquet' }, engine: 'native', now: FIXED_NOW });
});
afterAll(async () => engine?.close());

function cellSpec(roles: DrillSpec['roles'] = audit.report.roles): DrillSpec {
  const segment = unexplored?.segment ?? {};
  return {
    relation,
    roles,
    selection: { segment, action: unexplored?.action ?? null },
    columnTypes: Object.fromEntries(audit.profile.columns.map((c) => [c.name, c.type])),
  };
}

/** Reads every page; `plan` says, per page index, whether to use the previous page's cursor. */
async function readPages(spec: DrillSpec, size: number, useCursor: (page: number) => boolean): Promise<{ rows: Record<string, unknown>[]; keyset: number }> {
  const rows: Record<string, unknown>[] = [];
  let cursor: DrillCursor | null = null;
  let keyset = 0;
  for (let page = 0; page < 10_000; page++) {
    const offset = page * size;
    const after = useCursor(page) ? cursor : null;
    if (after) keyset++;
    const t: Table = await engine.query(drillPageSql(spec, { offset, limit: size, after }));
    if (t.rowCount === 0) break;
    cursor = cursorAfter(drillOrderColumns(spec), t, after, offset);
    rows.push(...rowObjects(t));
    if (t.rowCount < size) break;
  }
  return { rows, keyset };
}

describe('the (old-town, web) free-delivery cell of the demo log', () => {
  it('counts as many rows as the cube holds for the cell and the manifest planted', async () => {
    expect(unexplored?.segment).toEqual({ region: 'old-town', device: 'web' });
    const segs = audit.report.roles.segments;
    const [ri, di] = [segs.indexOf('region'), segs.indexOf('device')];
    const cube = audit.cells.filter((c) => c.segment[ri] === 'old-town' && c.segment[di] === 'web' && c.action === 'free-delivery').reduce((s, c) => s + c.n, 0);
    const count = parseDrillCount(await engine.query(drillCountSql(cellSpec())));
    expect(count).toBe(cube);
    expect(count).toBe(unexplored?.rows_affected);
  });

  it('pages by the time and decision id roles concatenate to the plain ordered query, with identical rows split across a boundary', async () => {
    const spec = cellSpec();
    const plain = rowObjects(await engine.query(drillSql(spec)));
    // The demo's retried writes are exact copies (manifest: identity.duplicates), so some neighbours tie on every key.
    const ties = plain.flatMap((r, i) => (i > 0 && r[ROW_HASH] === plain[i - 1]?.[ROW_HASH] ? [i] : []));
    expect(ties.length).toBeGreaterThan(0);
    const splitting = ties[0] as number;
    for (const [size, plan, label] of [
      [DRILL_PAGE_ROWS, () => true, 'keyset'],
      [splitting, () => true, 'keyset, boundary inside a tie'],
      [DRILL_PAGE_ROWS, () => false, 'offset'],
      [splitting, (p: number) => p % 3 !== 1, 'offset jumps then keyset'],
    ] as const) {
      const { rows, keyset } = await readPages(spec, size, plan);
      expect(rows.length, label).toBe(plain.length);
      expect(json(rows) === json(plain), label).toBe(true);
      if (label.startsWith('keyset')) expect(keyset, label).toBeGreaterThan(0);
    }
    for (const r of plain) expect([r.region, r.device, r.promotion]).toEqual(['old-town', 'web', 'free-delivery']);
    const times = plain.map((r) => String(r.logged_at));
    expect([...times].sort()).toEqual(times);
  });

  it('orders by the row hash alone when no time or id role is mapped, and still pages exactly', async () => {
    const spec = cellSpec({ time: null, decision_id: null, action: 'promotion' });
    const plain = rowObjects(await engine.query(drillSql(spec)));
    const { rows } = await readPages(spec, 500, () => true);
    expect(json(rows) === json(plain)).toBe(true);
    expect(rows.length).toBe(unexplored?.rows_affected);
  });

  it('selects a finding\'s rows from the predicate of its re-runnable SQL', async () => {
    const finding = audit.report.checks.flatMap((c) => c.findings).find((f) => findingWhere(f.sql, relation) !== null && (f.examples?.length ?? 0) > 0);
    expect(finding).toBeDefined();
    const where = findingWhere(finding?.sql, relation) as string;
    const spec: DrillSpec = { relation, roles: audit.report.roles, selection: { segment: {}, where } };
    const direct = await engine.query(`SELECT count(*)::DOUBLE FROM ${relation} WHERE ${where}`);
    expect(parseDrillCount(await engine.query(drillCountSql(spec)))).toBe(direct.columns[0]?.[0]);
    expect(findingWhere('SELECT 1', relation)).toBeNull();
  });
});

describe('key values written back into SQL', () => {
  // Each value goes out through the adapter's conversion (app/core/table.ts) and back in as a literal;
  // DuckDB must find it equal to the original and ordered the same against its neighbours.
  const CASES: [string, string][] = [
    ["TIMESTAMP '2026-03-04 18:17:19.123456'", 'TIMESTAMP'],
    ["CAST(TIMESTAMP '2026-03-04 18:17:19.123' AS TIMESTAMP_MS)", 'TIMESTAMP_MS'],
    ["DATE '1999-12-31'", 'DATE'],
    ['CAST(0.1 AS DOUBLE)', 'DOUBLE'],
    ['CAST(1e-300 AS DOUBLE) * 3', 'DOUBLE'],
    ["CAST('NaN' AS DOUBLE)", 'DOUBLE'],
    ["CAST('-Infinity' AS DOUBLE)", 'DOUBLE'],
    ['CAST(0.1 AS FLOAT)', 'FLOAT'],
    ['CAST(9007199254740993 AS BIGINT)', 'BIGINT'],
    ['CAST(18446744073709551615 AS UBIGINT)', 'UBIGINT'],
    ['CAST(-170141183460469231731687303715884105727 AS HUGEINT)', 'HUGEINT'],
    ['CAST(-12.5 AS DECIMAL(10,2))', 'DECIMAL(10,2)'],
    ["'it''s ' || chr(0) || ' here'", 'VARCHAR'],
    ['TRUE', 'BOOLEAN'],
    ["CAST('8e884ace-bee4-11e4-8dfc-aa07a5b093db' AS UUID)", 'UUID'],
  ];
  it.each(CASES)('%s reads back as an equal %s', async (expr, type) => {
    const t = await engine.query(`SELECT ${expr} AS v`);
    expect(t.types[0]).toBe(type);
    const lit = keyLiteral(t.columns[0]?.[0] ?? null, type);
    expect(lit).not.toBeNull();
    const check = await engine.query(`SELECT (${expr}) = ${lit} AND NOT ((${expr}) < ${lit}) AND NOT ((${expr}) > ${lit}) AS same`);
    expect(check.columns[0]?.[0]).toBe(true);
  });

  it('declines values it cannot write exactly, so the page falls back to OFFSET', () => {
    expect(keyLiteral('2026-03-04T18:17:19.123456Z', 'TIMESTAMP_NS')).toBeNull();
    expect(keyLiteral([1, 2], 'INTEGER[]')).toBeNull();
    expect(keyLiteral(1.5, 'BIGINT')).toBeNull();
  });
});

describe('cells the cube labels (null) or (other)', () => {
  it('count exactly the rows the cube counts, for every cell of a capped segment column', async () => {
    const values: string[] = [];
    // 40 rows: tier t0..t9 unevenly (t0 most), some tiers null; action a/b.
    for (let i = 0; i < 40; i++) values.push(`(${i % 7 === 0 ? 'NULL' : `'t${(i * i) % 10}'`}, '${i % 3 === 0 ? 'b' : 'a'}', 0.5, ${i % 2})`);
    await engine.query(`CREATE OR REPLACE TABLE capped_log AS SELECT * FROM (VALUES ${values.join(', ')}) v(tier, action, propensity, reward)`);
    const cols = parseDescribe(await engine.query(describeSql('capped_log')));
    const profile = parseProfile(await engine.query(profileSql('capped_log', cols)), cols);
    const roles = resolveRoles(profile, { segments: ['tier'], action: 'action', propensity: 'propensity', reward: 'reward', time: null, decision_id: null });
    const cap = 3;
    const cells = parseCube(await engine.query(cubeSql({ relation: 'capped_log', rows: rowExpressions(roles, profile, null), capped: [0], cap, floor: 0.01 })), 1);
    const kept = [...new Set(cells.map((c) => c.segment[0] as string))].filter((v) => v !== '(other)');
    expect(cells.some((c) => c.segment[0] === '(other)')).toBe(true);
    for (const c of cells) {
      const spec: DrillSpec = { relation: 'capped_log', roles, selection: { segment: { tier: c.segment[0] as string }, action: c.action, kept: { tier: kept } } };
      expect(parseDrillCount(await engine.query(drillCountSql(spec))), `${c.segment[0]} × ${c.action}`).toBe(c.n);
      expect((await engine.query(drillPageSql(spec, { offset: 0, limit: 100 }))).rowCount).toBe(c.n);
    }
  });
});
