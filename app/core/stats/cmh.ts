import { chiSquareSf } from './distributions.ts';
import { requireNonNegative } from './validate.ts';

/** One stratum of a 2 × W table: events and rows in each of W columns (e.g. time windows). */
export interface BinaryStratum {
  readonly events: readonly number[];
  readonly rows: readonly number[];
}

export interface CmhResult {
  readonly statistic: number;
  readonly df: number;
  readonly pValue: number;
}

/** Solves A x = b by Gaussian elimination with partial pivoting; null when A is singular. */
function solve(a: number[][], b: number[]): number[] | null {
  const n = b.length;
  const m = a.map((row, i) => [...row, b[i] as number]);
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r]![c]!) > Math.abs(m[piv]![c]!)) piv = r;
    if (Math.abs(m[piv]![c]!) < 1e-300) return null;
    [m[c], m[piv]] = [m[piv]!, m[c]!];
    for (let r = c + 1; r < n; r++) {
      const f = m[r]![c]! / m[c]![c]!;
      for (let k = c; k <= n; k++) m[r]![k]! -= f * m[c]![k]!;
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = m[r]![n]!;
    for (let k = r + 1; k < n; k++) s -= m[r]![k]! * x[k]!;
    x[r] = s / m[r]![r]!;
  }
  return x;
}

/**
 * Generalized Cochran–Mantel–Haenszel statistic of general association for 2 × W tables stratified
 * by K strata, Q = dᵀV⁻¹d with hypergeometric moments, df = W − 1 (Landis, Heyman & Koch 1978;
 * as R's mantelhaen.test). Columns with no rows in any stratum are dropped; strata with < 2 rows add nothing.
 */
export function cmhGeneralAssociation(strata: readonly BinaryStratum[]): CmhResult {
  const width = strata[0]?.rows.length ?? 0;
  for (const s of strata) {
    if (s.rows.length !== width || s.events.length !== width) throw new RangeError('every stratum needs the same number of columns');
    s.rows.forEach((n, j) => {
      requireNonNegative('rows', n);
      requireNonNegative('events', s.events[j] as number);
      if ((s.events[j] as number) > n) throw new RangeError(`stratum column ${j}: ${s.events[j]} events exceed ${n} rows`);
    });
  }
  const keep = Array.from({ length: width }, (_, j) => j).filter((j) => strata.some((s) => (s.rows[j] as number) > 0));
  const used = strata.filter((s) => keep.reduce((t, j) => t + (s.rows[j] as number), 0) >= 2);
  const w = keep.length;
  if (w < 2 || used.length === 0) return { statistic: 0, df: 0, pValue: 1 };
  const k = w - 1;
  const d = new Array<number>(k).fill(0);
  const v = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (const s of used) {
    const rows = keep.map((j) => s.rows[j] as number);
    const events = keep.map((j) => s.events[j] as number);
    const N = rows.reduce((a, b) => a + b, 0);
    const S = events.reduce((a, b) => a + b, 0);
    const f = (S * (N - S)) / (N * N * (N - 1));
    for (let j = 0; j < k; j++) {
      d[j]! += (events[j] as number) - ((rows[j] as number) * S) / N;
      for (let l = 0; l < k; l++) v[j]![l]! += f * (rows[j] as number) * ((j === l ? N : 0) - (rows[l] as number));
    }
  }
  // columns whose variance is 0 in every stratum (no events or all events) carry no information
  const informative = Array.from({ length: k }, (_, j) => j).filter((j) => (v[j]![j] as number) > 0);
  if (informative.length === 0) return { statistic: 0, df: 0, pValue: 1 };
  const dd = informative.map((j) => d[j] as number);
  const vv = informative.map((j) => informative.map((l) => v[j]![l] as number));
  const x = solve(vv, dd);
  if (!x) return { statistic: 0, df: 0, pValue: 1 };
  const statistic = Math.max(0, dd.reduce((s, di, i) => s + di * (x[i] as number), 0));
  const df = informative.length;
  return { statistic, df, pValue: chiSquareSf(statistic, df) };
}
