/**
 * The cube query in the ClickHouse dialect, answering bit for bit what cubeSql answers on DuckDB
 * (test/engine/clickhouse-audit.test.ts). The same measures (app/core/cube/measures.ts) and the same
 * exact sums, spelled for release 18.16, which has no CTEs over subqueries, no 128-bit integers and no
 * GROUPING SETS:
 * - Row values are WITH aliases (`cw_p`, `cw_r`, ...), so the aggregate reads the relation directly and a
 *   Distributed table aggregates on its shards; the scales are a first statement (one more read of the log,
 *   as DuckDB's scale CTE is).
 * - A fixed-point sum is kept as limbs: each term t = x·2^s is rounded to an integer half to even (DuckDB's
 *   DOUBLE → HUGEINT cast), |t| is split into floor(|t|/2^64) and the rest's two 32-bit halves, and positive
 *   and negative terms are summed apart in UInt64, exactly for fewer than 2^32 rows. The cube's six limb sums
 *   per measure come back and finishExactSums forms the 128-bit total and its double as DuckDB forms a
 *   HUGEINT's: lower + upper·2^64 in doubles (with its special case for upper = −1), so even its double
 *   rounding is the same. The (keys, p) level's two sums, which the next level reads, do the same in SQL.
 */
import { CELL_MEASURES, TARGET_MEASURES, type Aggregate, type Measure, type MeasureContext } from '../cube/measures.ts';
import { clickhouse as d } from '../sql/dialect-clickhouse.ts';
import { finiteReward, type RowExpressions } from './expressions.ts';
import type { CubeSpec } from './cube.ts';
import type { Cell, Table } from '../table.ts';

const HEADROOM = 124;
const TWO64 = 'pow(2, 64)';
const TWO32 = '4294967296';

/** The measures' own names (p, r, d, q and the group sums) as aliases no log column has. */
const NAMES = /\b(c_r|c|s_r2|s_r|s_d2|s_d|p|r|d|q)\b/g;
const own = (sql: string) => sql.replace(NAMES, 'cw_$1');

/** DuckDB's cast of a double to an integer rounds half to even; 18.16's round() rounds half away from zero. */
const halfEven = (x: string) => `if((${x}) - floor(${x}) = 0.5, 2 * round((${x}) / 2), round(${x}))`;

function scaleOf(bound: string, count: string): string {
  return `if(isFinite(${bound}), pow(2, least(1000, greatest(-1000, floor(${HEADROOM} - log2(${count} + 1) - log2(greatest(${bound}, 1e-300)))))), 0 / 0)`;
}

/** The same power of two as cube.ts's scaleLiteral, for a bound known before the query. */
function scaleLiteral(bound: number, count: number): string {
  const s = Math.min(1000, Math.max(-1000, Math.floor(HEADROOM - Math.log2(count + 1) - Math.log2(Math.max(bound, 1e-300)))));
  return d.double(2 ** s);
}

/** A bound on |x| over the rows where `where` holds (0 over none); ∞ if one of them is not finite. */
function boundOf(x: string, where: string | undefined): string {
  const w = where ?? d.truth;
  return `if(countIf((${w}) AND NOT isFinite(${x})) > 0, 1 / 0, maxIf(abs(${x}), ${w}))`;
}

/** The per-row term t = round_half_even(x·k) where `where` holds (else 0), and its limbs as WITH aliases. */
function limbAliases(id: string, x: string, where: string | undefined, k: string): { rows: string[]; t: string; h: string; m: string; o: string } {
  const t = `cw_t${id}`;
  const h = `cw_h${id}`;
  const l = `cw_l${id}`;
  const m = `cw_m${id}`;
  const o = `cw_o${id}`;
  const term = halfEven(`(${x}) * ${k}`);
  return {
    t, h, m, o,
    rows: [
      `${where ? `if(ifNull(${where}, 0), ${term}, 0)` : term} AS ${t}`,
      `floor(abs(${t}) / ${TWO64}) AS ${h}`,
      `abs(${t}) - ${h} * ${TWO64} AS ${l}`,
      `floor(${l} / ${TWO32}) AS ${m}`,
      `${l} - ${m} * ${TWO32} AS ${o}`,
    ],
  };
}

/** The six limb sums (positive and negative terms apart) of one fixed-point sum, as result columns `<alias>__{p,n}{h,m,o}`. */
function limbSums(alias: string, limbs: ReturnType<typeof limbAliases>): string[] {
  return (['>', '<'] as const).flatMap((cmp) => {
    const side = cmp === '>' ? 'p' : 'n';
    return (['h', 'm', 'o'] as const).map((limb) => `sumIf(toUInt64(${limbs[limb]}), ${limbs.t} ${cmp} 0) AS ${alias}__${side}${limb}`);
  });
}

/**
 * The double DuckDB forms from a 128-bit integer, in SQL over the limb sums (for a level that a later level
 * reads): the carries give the lower (unsigned) and upper (signed) 64-bit words, then lower + upper·2^64.
 */
function doubleInSql(sum: (side: 'p' | 'n', limb: 'h' | 'm' | 'o') => string): string {
  const words = (side: 'p' | 'n') => {
    const mid = `(${sum(side, 'm')} + intDiv(${sum(side, 'o')}, ${TWO32}))`;
    return { lower: `(modulo(${mid}, ${TWO32}) * ${TWO32} + modulo(${sum(side, 'o')}, ${TWO32}))`, upper: `(${sum(side, 'h')} + intDiv(${mid}, ${TWO32}))` };
  };
  const p = words('p');
  const n = words('n');
  const lower = `toUInt64(${p.lower} - ${n.lower})`;
  const upper = `(toInt64(${p.upper}) - toInt64(${n.upper}) - if(${p.lower} < ${n.lower}, 1, 0))`;
  return `if(${upper} = -1, -toFloat64(bitNot(${lower})) - 1, toFloat64(${lower}) + toFloat64(${upper}) * ${TWO64})`;
}

/** DuckDB's HUGEINT → DOUBLE: lower + upper·(2^64 − 1) in doubles (2^64 − 1 rounds to 2^64), with its own case for upper = −1. */
export function hugeintToDouble(v: bigint): number {
  const upper = v >> 64n;
  const lower = v & 0xffffffffffffffffn;
  return upper === -1n ? -Number(0xffffffffffffffffn - lower) - 1 : Number(lower) + Number(upper) * 2 ** 64;
}

const LIMBS = ['ph', 'pm', 'po', 'nh', 'nm', 'no'] as const;
const big = (v: unknown) => (typeof v === 'bigint' ? v : BigInt(String(v ?? 0)));

/**
 * A cube result with its fixed-point sums as limbs (`<alias>__ph` ..., the scale `<alias>__k` and the plain
 * sum `<alias>__plain`) turned into the one column `<alias>` DuckDB's cube query answers, the same double.
 */
export function finishExactSums(table: Table): Table {
  const scales = table.names.filter((n) => n.endsWith('__k')).map((n) => n.slice(0, -3));
  if (scales.length === 0) return table;
  const col = (n: string) => table.columns[table.names.indexOf(n)] as readonly unknown[];
  const drop = new Set(scales.flatMap((a) => [...LIMBS.map((l) => `${a}__${l}`), `${a}__k`, `${a}__plain`]));
  const names: string[] = [];
  const types: string[] = [];
  const columns: (readonly Cell[])[] = [];
  table.names.forEach((n, j) => {
    if (drop.has(n)) return;
    names.push(n);
    types.push(table.types[j] as string);
    columns.push(table.columns[j] as readonly Cell[]);
  });
  for (const a of scales) {
    const k = col(`${a}__k`);
    const plain = col(`${a}__plain`);
    const limbs = LIMBS.map((l) => col(`${a}__${l}`));
    const values: number[] = [];
    for (let i = 0; i < table.rowCount; i++) {
      const scale = Number(k[i]);
      if (!Number.isFinite(scale)) { values.push(Number(plain[i] ?? 0)); continue; }
      const [ph, pm, po, nh, nm, no] = limbs.map((c) => big(c[i]));
      const total = ((ph as bigint) << 64n) + ((pm as bigint) << 32n) + (po as bigint) - ((nh as bigint) << 64n) - ((nm as bigint) << 32n) - (no as bigint);
      values.push(hugeintToDouble(total) / scale);
    }
    names.push(a);
    types.push('DOUBLE');
    columns.push(values);
  }
  return { names, types, columns, rowCount: table.rowCount };
}

function measureList(spec: CubeSpec, grouped: boolean): [string, Aggregate][] {
  const x: MeasureContext = { floor: spec.floor, d };
  const measures: readonly Measure[] = !grouped && spec.rows.targetPropensity ? [...CELL_MEASURES, ...TARGET_MEASURES] : CELL_MEASURES;
  return measures.map((m) => [m.column, grouped ? m.groups(x) : m.rows(x)]);
}

const renamed = (agg: Aggregate): Aggregate => {
  const where = agg.where === undefined ? {} : { where: own(agg.where) };
  if ('min' in agg) return { min: own(agg.min), where: own(agg.where) };
  if ('max' in agg) return { max: own(agg.max), where: own(agg.where) };
  return { ...agg, sum: own(agg.sum), ...where };
};

/** A scale as SQL: a finite power of two as a literal, anything else (no finite bound) as NaN. */
const kLiteral = (k: number | null | undefined) => (typeof k === 'number' && Number.isFinite(k) && k > 0 ? d.double(k) : '(0 / 0)');

/**
 * The aggregation of `list`: the SELECT list and the per-row WITH aliases, the non-integral sums at the
 * given scales (in list order; absent: the scales statement's SELECT list instead).
 */
function aggregation(list: readonly [string, Aggregate][], scales: readonly (number | null)[] | null): { selects: string[]; rows: string[]; scaleParts: string[] } {
  const selects: string[] = [];
  const rows: string[] = [];
  const scaleParts: string[] = [];
  list.forEach(([alias, raw]) => {
    const agg = renamed(raw);
    if ('min' in agg) selects.push(`${d.minIf(agg.min, agg.where)} AS ${alias}`);
    else if ('max' in agg) selects.push(`${d.maxIf(agg.max, agg.where)} AS ${alias}`);
    else if (agg.integral) selects.push(`${agg.sum === '1' ? d.countIf(agg.where ?? d.truth) : `toFloat64(sumIf(${agg.sum}, ${agg.where ?? d.truth}))`} AS ${alias}`);
    else {
      const i = scaleParts.length;
      scaleParts.push(`${scaleOf(boundOf(agg.sum, agg.where), 'count()')} AS k_${alias}`);
      const k = kLiteral(scales?.[i]);
      const limbs = limbAliases(String(i), agg.sum, agg.where, k);
      rows.push(...limbs.rows);
      selects.push(...limbSums(alias, limbs), `${k} AS ${alias}__k`, `sumIf(${agg.sum}, ${agg.where ?? d.truth}) AS ${alias}__plain`);
    }
  });
  return { selects, rows, scaleParts };
}

const withList = (parts: readonly string[]) => (parts.length ? `WITH ${parts.join(',\n  ')}\n` : '');

/** The row values every level reads, as WITH aliases over the log's own columns. */
function baseAliases(rows: RowExpressions, shift: string): string[] {
  return [
    ...rows.segments.map((e, i) => `${e} AS cw_s${i}`),
    `${rows.action} AS cw_a`,
    `${rows.version ?? "''"} AS cw_v`,
    `${rows.bucket} AS cw_b`,
    `${rows.propensity} AS cw_p`,
    `${rows.reward} AS cw_r`,
    `cw_r - ${shift} AS cw_d`,
    ...(rows.targetPropensity ? [`${rows.targetPropensity} AS cw_q`] : []),
  ];
}

interface Levels {
  /** what the final aggregation reads, and the WITH aliases it needs over it */
  readonly source: string;
  readonly base: string[];
  readonly grouped: boolean;
}

function levels(spec: CubeSpec): Levels {
  const { rows } = spec;
  const shift = d.double(spec.reward?.shift ?? 0);
  const grouped = !!spec.byPropensity && !rows.targetPropensity;
  if (!grouped) return { source: spec.relation, base: baseAliases(rows, shift), grouped };
  const keys = [...rows.segments.map((_, i) => `s${i}`), 'a', 'v', 'b'];
  // Σd and Σd² of each (keys, p) group are row-level sums: fixed point, scaled by the reward's range
  const rowCount = spec.rowCount ?? 2 ** 40;
  const reward = spec.reward ?? null;
  const h = reward ? 2 * reward.halfRange : null;
  // The limb sums are result columns of the grouping and the double is formed one level up, over the groups:
  // written into one expression, 18.16 evaluates every copy of the same sumIf as an aggregate of its own.
  const groupSum = (id: string, x: string, bound: number | null) => {
    if (bound === null) return { rows: [] as string[], cols: [`toFloat64(sumIf(${x}, cw_dd IS NOT NULL)) AS cw_${id}`], sum: `cw_${id}` };
    const k = scaleLiteral(bound, rowCount);
    const limbs = limbAliases(id, x, 'cw_dd IS NOT NULL', k);
    const col = (side: 'p' | 'n', limb: 'h' | 'm' | 'o') => `cw_${id}__${side}${limb}`;
    const cols = (['p', 'n'] as const).flatMap((side) => (['h', 'm', 'o'] as const).map((limb) => `sumIf(toUInt64(${limbs[limb]}), ${limbs.t} ${side === 'p' ? '>' : '<'} 0) AS ${col(side, limb)}`));
    return { rows: limbs.rows, cols, sum: `${doubleInSql(col)} / ${k}` };
  };
  const sd = groupSum('g1', 'cw_dd', h);
  const sd2 = groupSum('g2', 'cw_dd * cw_dd', h === null ? null : h * h);
  const base = [...baseAliases(rows, shift), `if(ifNull(${finiteReward('cw_r', d)}, 0), cw_r - ${shift}, NULL) AS cw_dd`];
  const groupKeys = [...keys.map((k) => `cw_${k}`), 'cw_p'];
  const byP = `${withList([...base, ...sd.rows, ...sd2.rows])}SELECT ${[...groupKeys, 'toFloat64(count()) AS cw_c', 'toFloat64(count(cw_dd)) AS cw_c_r', ...sd.cols, ...sd2.cols].join(', ')}\nFROM ${spec.relation}\nGROUP BY ${groupKeys.join(', ')}`;
  const sums = `SELECT ${[...groupKeys, 'cw_c', 'cw_c_r', `${sd.sum} AS cw_s_d`, `${sd2.sum} AS cw_s_d2`].join(', ')} FROM (\n${byP}\n)`;
  const g = `(SELECT *, cw_s_d + ${shift} * cw_c_r AS cw_s_r, cw_s_d2 + 2 * ${shift} * cw_s_d + ${shift} * ${shift} * cw_c_r AS cw_s_r2 FROM (\n${sums}\n))`;
  return { source: g, base: [], grouped };
}

function checkSupported(spec: CubeSpec): void {
  if (spec.capped.length > 0) throw new Error('segment caps are not built for ClickHouse yet: raise segments.cap above the segment columns\' distinct values or leave the capped column out of the segments');
}

/**
 * The first of the cube's two statements on ClickHouse: the scale 2^s of every fixed-point sum (columns
 * `k_<measure>`, over the rows or the (keys, p) groups, as DuckDB's scale CTE), or null when none needs one.
 * Written out as literals in the second statement (cubeSqlClickHouse), they keep its text small: 18.16 expands
 * every use of a WITH alias in place, a scalar subquery's too.
 */
export function cubeScalesSqlClickHouse(spec: CubeSpec): string | null {
  checkSupported(spec);
  const lv = levels(spec);
  const { scaleParts } = aggregation(measureList(spec, lv.grouped), null);
  if (scaleParts.length === 0) return null;
  return `${withList(lv.base)}SELECT ${scaleParts.join(',\n  ')}\nFROM ${lv.source}`;
}

/** The scales the first statement answered, in its column order. */
export function parseCubeScales(table: Table | null): (number | null)[] | null {
  if (!table) return null;
  return table.columns.map((c) => (c[0] === null || c[0] === undefined ? null : Number(c[0])));
}

export function cubeSqlClickHouse(spec: CubeSpec, scales: readonly (number | null)[] | null): string {
  checkSupported(spec);
  const keys = [...spec.rows.segments.map((_, i) => `s${i}`), 'a', 'v', 'b'];
  const lv = levels(spec);
  const { selects, rows } = aggregation(measureList(spec, lv.grouped), scales ?? []);
  const outKeys = keys.map((k) => `cw_${k} AS ${k}`);
  // Over the (keys, p) groups the terms and their limbs are columns of a subquery, computed once per group;
  // as WITH aliases 18.16 would expand them into every aggregate that reads them. Over the rows of a
  // Distributed table they stay WITH aliases, so that the shards aggregate (a subquery would send its rows).
  if (lv.grouped) return `SELECT ${[...outKeys, ...selects].join(',\n  ')}\nFROM (SELECT ${['*', ...rows].join(',\n  ')}\nFROM ${lv.source})\nGROUP BY ${keys.join(', ')}\nORDER BY ${keys.join(', ')}`;
  return `${withList([...lv.base, ...rows])}SELECT ${[...outKeys, ...selects].join(',\n  ')}\nFROM ${lv.source}\nGROUP BY ${keys.join(', ')}\nORDER BY ${keys.join(', ')}`;
}
