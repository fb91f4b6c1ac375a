/**
 * The sufficient-statistics cube (DEVELOPERS.md, "The scans of one audit"): ONE scan grouped by (segment values, action,
 * policy version, time bucket). Segment columns over the cap keep their most frequent values and
 * fold the rest into "(other)" inside the same statement, by merging cells (sums add, mins and
 * maxes combine), so capping costs no extra scan.
 */
import type { CubeCell, TargetColumnSums } from '../cube/types.ts';
import { double, integer, literal } from '../sql/quote.ts';
import type { Table } from '../table.ts';
import type { ColumnProfile } from './profile.ts';
import { NULL_LABEL, OTHER_LABEL, VALID_P, VALID_R, type RowExpressions } from './expressions.ts';

export interface CubeSpec {
  readonly relation: string;
  readonly rows: RowExpressions;
  /** Segment positions to cap at `cap` values. */
  readonly capped: readonly number[];
  readonly cap: number;
  readonly floor: number;
  /**
   * Group the rows by (cell keys, p) first and derive every statistic from those groups: exact for any
   * log, and much cheaper when propensities take few distinct values (a few aggregates per row instead
   * of two dozen). Ignored when a target-propensity column is mapped.
   */
  readonly byPropensity?: boolean;
}

/** Propensity-level grouping pays off while the distinct propensities stay this few. */
export const BY_PROPENSITY_MAX_DISTINCT = 100_000;

/**
 * Whether the cube (and the tails) group rows by propensity first: when the profile counted the
 * propensity column's distinct values over the whole log and found few. A count over the first rows
 * only means more than profile.ts's EXACT_DISTINCT_MAX among them: a continuous propensity.
 */
export function groupsByPropensity(propensity: ColumnProfile | undefined): boolean {
  return !!propensity && propensity.distinctBasis === 'all rows' && propensity.distinct <= BY_PROPENSITY_MAX_DISTINCT;
}

const VALID_Q = '(q >= 0 AND q <= 1 AND NOT isnan(q))';

/** [alias, aggregate over the base rows, how cells merge] */
function aggregates(spec: CubeSpec): [string, string, 'sum' | 'min' | 'max'][] {
  const pv = VALID_P;
  const rw = `${VALID_P} AND ${VALID_R}`;
  const cnt = (where: string) => `count(*) FILTER (WHERE ${where})::DOUBLE`;
  const sum = (x: string, where: string) => `coalesce(sum(${x}) FILTER (WHERE ${where}), 0)::DOUBLE`;
  const out: [string, string, 'sum' | 'min' | 'max'][] = [
    ['n', 'count(*)::DOUBLE', 'sum'],
    ['n_p_null', cnt('p IS NULL'), 'sum'],
    ['n_p_nan', cnt('isnan(p)'), 'sum'],
    ['n_p_nonpos', cnt('p <= 0'), 'sum'],
    ['n_p_above', cnt('p > 1 AND NOT isnan(p)'), 'sum'],
    ['n_p_one', cnt('p = 1'), 'sum'],
    ['n_p_floor', cnt(`${pv} AND p < ${double(spec.floor)}`), 'sum'],
    ['n_r_null', cnt(`NOT coalesce(${VALID_R}, false)`), 'sum'],
    ['n_p', cnt(pv), 'sum'],
    ['s_ip', sum('1 / p', pv), 'sum'],
    ['s_ip2', sum('1 / (p * p)', pv), 'sum'],
    ['min_p', `min(p) FILTER (WHERE ${pv})`, 'min'],
    ['max_p', `max(p) FILTER (WHERE ${pv})`, 'max'],
    ['n_rw', cnt(rw), 'sum'],
    ['s_ip_rw', sum('1 / p', rw), 'sum'],
    ['s_ip2_rw', sum('1 / (p * p)', rw), 'sum'],
    ['s_r', sum('r', rw), 'sum'],
    ['s_r2', sum('r * r', rw), 'sum'],
    ['s_rip', sum('r / p', rw), 'sum'],
    ['s_rip2', sum('r / (p * p)', rw), 'sum'],
    ['s_r2ip2', sum('r * r / (p * p)', rw), 'sum'],
    ['n_rall', cnt(VALID_R), 'sum'],
    ['s_rall', sum('r', VALID_R), 'sum'],
    ['s_r2all', sum('r * r', VALID_R), 'sum'],
  ];
  if (spec.rows.targetPropensity) {
    const qv = `${pv} AND ${VALID_Q}`;
    const qrw = `${rw} AND ${VALID_Q}`;
    out.push(
      ['t_n_invalid', cnt(`NOT coalesce(${VALID_Q}, false)`), 'sum'],
      ['t_sw', sum('q / p', qv), 'sum'],
      ['t_sw2', sum('q * q / (p * p)', qv), 'sum'],
      ['t_sw_rw', sum('q / p', qrw), 'sum'],
      ['t_sw2_rw', sum('q * q / (p * p)', qrw), 'sum'],
      ['t_swr', sum('q * r / p', qrw), 'sum'],
      ['t_sw2r', sum('q * q * r / (p * p)', qrw), 'sum'],
      ['t_sw2r2', sum('q * q * r * r / (p * p)', qrw), 'sum'],
    );
  }
  return out;
}

/**
 * The same aggregates as `aggregates`, over groups g of rows sharing (cell keys, p) with c = rows,
 * c_r = rows with a finite reward, s_r / s_r2 = their Σr / Σr²: Σ_rows f(p) = Σ_g c·f(p), and
 * Σ_rows r·f(p) = Σ_g s_r·f(p), so each statistic is a sum over groups.
 */
function byPropensityAggregates(spec: CubeSpec): [string, string][] {
  const pv = VALID_P;
  const cnt = (where: string) => `coalesce(sum(c) FILTER (WHERE ${where}), 0)::DOUBLE`;
  const sum = (x: string, where?: string) => `coalesce(sum(${x})${where ? ` FILTER (WHERE ${where})` : ''}, 0)::DOUBLE`;
  return [
    ['n', 'sum(c)::DOUBLE'],
    ['n_p_null', cnt('p IS NULL')],
    ['n_p_nan', cnt('isnan(p)')],
    ['n_p_nonpos', cnt('p <= 0')],
    ['n_p_above', cnt('p > 1 AND NOT isnan(p)')],
    ['n_p_one', cnt('p = 1')],
    ['n_p_floor', cnt(`${pv} AND p < ${double(spec.floor)}`)],
    ['n_r_null', sum('c - c_r')],
    ['n_p', cnt(pv)],
    ['s_ip', sum('c / p', pv)],
    ['s_ip2', sum('c / (p * p)', pv)],
    ['min_p', `min(p) FILTER (WHERE ${pv})`],
    ['max_p', `max(p) FILTER (WHERE ${pv})`],
    ['n_rw', sum('c_r', pv)],
    ['s_ip_rw', sum('c_r / p', pv)],
    ['s_ip2_rw', sum('c_r / (p * p)', pv)],
    ['s_r', sum('s_r', pv)],
    ['s_r2', sum('s_r2', pv)],
    ['s_rip', sum('s_r / p', pv)],
    ['s_rip2', sum('s_r / (p * p)', pv)],
    ['s_r2ip2', sum('s_r2 / (p * p)', pv)],
    ['n_rall', sum('c_r')],
    ['s_rall', sum('s_r')],
    ['s_r2all', sum('s_r2')],
  ];
}

export function cubeSql(spec: CubeSpec): string {
  const { rows } = spec;
  const segs = rows.segments.map((_, i) => `s${i}`);
  const keys = [...segs, 'a', 'v', 'b'];
  const base = [
    ...rows.segments.map((e, i) => `${e} AS s${i}`),
    `${rows.action} AS a`,
    `${rows.version ?? "''"} AS v`,
    `${rows.bucket} AS b`,
    `${rows.propensity} AS p`,
    `${rows.reward} AS r`,
    ...(rows.targetPropensity ? [`${rows.targetPropensity} AS q`] : []),
  ];
  const aggs = aggregates(spec);
  const ctes = [`base AS (\n  SELECT ${base.join(', ')}\n  FROM ${spec.relation}\n)`];
  if (spec.byPropensity && !rows.targetPropensity) {
    const fine = byPropensityAggregates(spec);
    ctes.push(
      `by_p AS (\n  SELECT ${keys.join(', ')}, p, count(*)::DOUBLE AS c, count(rr)::DOUBLE AS c_r, coalesce(sum(rr), 0)::DOUBLE AS s_r, coalesce(sum(rr * rr), 0)::DOUBLE AS s_r2\n`
        + `  FROM (SELECT *, CASE WHEN ${VALID_R} THEN r END AS rr FROM base) GROUP BY ${keys.join(', ')}, p\n)`,
      `raw AS (\n  SELECT ${keys.join(', ')},\n    ${fine.map(([alias, expr]) => `${expr} AS ${alias}`).join(',\n    ')}\n  FROM by_p GROUP BY ${keys.join(', ')}\n)`,
    );
  } else {
    ctes.push(`raw AS (\n  SELECT ${keys.join(', ')},\n    ${aggs.map(([alias, expr]) => `${expr} AS ${alias}`).join(',\n    ')}\n  FROM base GROUP BY ${keys.join(', ')}\n)`);
  }
  if (spec.capped.length > 0) {
    for (const i of spec.capped) {
      ctes.push(`top_s${i} AS (SELECT s${i} FROM raw GROUP BY s${i} ORDER BY sum(n) DESC, s${i} LIMIT ${integer(spec.cap)})`);
    }
    const capKeys = keys.map((k) => {
      const i = segs.indexOf(k);
      return spec.capped.includes(i) ? `CASE WHEN s${i} IN (SELECT s${i} FROM top_s${i}) THEN s${i} ELSE ${literal(OTHER_LABEL)} END AS s${i}` : k;
    });
    ctes.push(`capped AS (\n  SELECT ${capKeys.join(', ')}, ${aggs.map(([a]) => a).join(', ')} FROM raw\n)`);
    const merged = aggs.map(([a, , how]) => `${how}(${a}) AS ${a}`);
    ctes.push(`merged AS (\n  SELECT ${keys.join(', ')}, ${merged.join(', ')} FROM capped GROUP BY ${keys.join(', ')}\n)`);
    // the distinct values a capped column had before capping, counted exactly from the uncapped cells
    const counts = spec.capped.map((i) => `(SELECT count(DISTINCT s${i}) FILTER (WHERE s${i} <> ${literal(NULL_LABEL)}) FROM raw)::DOUBLE AS d_s${i}`);
    return `WITH ${ctes.join(',\n')}\nSELECT *, ${counts.join(', ')} FROM merged\nORDER BY ${keys.join(', ')}`;
  }
  return `WITH ${ctes.join(',\n')}\nSELECT * FROM raw\nORDER BY ${keys.join(', ')}`;
}

function nums(table: Table, name: string): readonly (number | null)[] {
  const j = table.names.indexOf(name);
  if (j < 0) throw new Error(`cube result lacks column ${name}`);
  return (table.columns[j] as readonly unknown[]).map((v) => (v === null ? null : Number(v)));
}

/** Distinct values of each capped segment column before capping (the cube's d_s{i} columns), by position. */
export function parseCappedDistinct(table: Table, capped: readonly number[]): Map<number, number> {
  const out = new Map<number, number>();
  for (const i of capped) {
    const j = table.names.indexOf(`d_s${i}`);
    const v = j < 0 ? undefined : (table.columns[j] as readonly unknown[])[0];
    if (v !== undefined && v !== null) out.set(i, Number(v));
  }
  return out;
}

export function parseCube(table: Table, segmentCount: number): CubeCell[] {
  const col = (name: string) => table.columns[table.names.indexOf(name)] as readonly unknown[];
  const segCols = Array.from({ length: segmentCount }, (_, i) => col(`s${i}`));
  const a = col('a');
  const v = col('v');
  const b = nums(table, 'b');
  const f = (name: string) => nums(table, name);
  const n = f('n'), nPNull = f('n_p_null'), nPNaN = f('n_p_nan'), nPNonPos = f('n_p_nonpos'), nPAbove = f('n_p_above');
  const nPOne = f('n_p_one'), nPFloor = f('n_p_floor'), nRNull = f('n_r_null'), nP = f('n_p'), sIp = f('s_ip'), sIp2 = f('s_ip2');
  const minP = f('min_p'), maxP = f('max_p'), nRw = f('n_rw'), sIpRw = f('s_ip_rw'), sIp2Rw = f('s_ip2_rw');
  const sR = f('s_r'), sR2 = f('s_r2'), sRip = f('s_rip'), sRip2 = f('s_rip2'), sR2ip2 = f('s_r2ip2');
  const nRAll = f('n_rall'), sRAll = f('s_rall'), sR2All = f('s_r2all');
  const hasTarget = table.names.includes('t_sw');
  const t = hasTarget ? ['t_n_invalid', 't_sw', 't_sw2', 't_sw_rw', 't_sw2_rw', 't_swr', 't_sw2r', 't_sw2r2'].map(f) : null;
  const cells: CubeCell[] = [];
  const z = (x: readonly (number | null)[], i: number) => x[i] ?? 0;
  for (let i = 0; i < table.rowCount; i++) {
    const target: TargetColumnSums | null = t
      ? { nInvalid: z(t[0]!, i), sumW: z(t[1]!, i), sumW2: z(t[2]!, i), sumWRw: z(t[3]!, i), sumW2Rw: z(t[4]!, i), sumWR: z(t[5]!, i), sumW2R: z(t[6]!, i), sumW2R2: z(t[7]!, i) }
      : null;
    cells.push({
      segment: segCols.map((c) => String(c[i])),
      action: String(a[i]),
      version: String(v[i] ?? ''),
      bucket: z(b, i),
      n: z(n, i),
      nPNull: z(nPNull, i),
      nPNaN: z(nPNaN, i),
      nPNonPositive: z(nPNonPos, i),
      nPAboveOne: z(nPAbove, i),
      nPInvalid: z(nPNull, i) + z(nPNaN, i) + z(nPNonPos, i) + z(nPAbove, i),
      nPBelowFloor: z(nPFloor, i),
      nPOne: z(nPOne, i),
      nRNull: z(nRNull, i),
      nP: z(nP, i),
      sumInvP: z(sIp, i),
      sumInvP2: z(sIp2, i),
      minP: minP[i] ?? null,
      maxP: maxP[i] ?? null,
      nRw: z(nRw, i),
      sumInvPRw: z(sIpRw, i),
      sumInvP2Rw: z(sIp2Rw, i),
      sumR: z(sR, i),
      sumR2: z(sR2, i),
      sumRInvP: z(sRip, i),
      sumRInvP2: z(sRip2, i),
      sumR2InvP2: z(sR2ip2, i),
      nRAll: z(nRAll, i),
      sumRAll: z(sRAll, i),
      sumR2All: z(sR2All, i),
      target,
    });
  }
  return cells;
}
