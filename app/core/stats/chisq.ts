import { chiSquareSf } from './distributions.ts';
import { requireNonNegative } from './validate.ts';

export interface ChiSquareResult {
  readonly statistic: number;
  /** (r' - 1)(c' - 1) over the rows and columns that have any count; 0 when fewer than 2 of either remain. */
  readonly df: number;
  /** Upper tail of χ²(df); 1 when df = 0 (nothing to compare). */
  readonly pValue: number;
  /** Indices of all-zero rows and columns, left out because their expected counts are 0. */
  readonly droppedRows: number[];
  readonly droppedColumns: number[];
}

/** Pearson chi-square test of homogeneity Σ (O - E)²/E, E = row·column/total, no continuity correction (Pearson 1900; Agresti, Categorical Data Analysis). */
export function chiSquareHomogeneity(table: readonly (readonly number[])[]): ChiSquareResult {
  if (table.length === 0) throw new RangeError('contingency table has no rows');
  const cols = (table[0] as readonly number[]).length;
  table.forEach((row, i) => {
    if (row.length !== cols) throw new RangeError(`contingency table row ${i} has ${row.length} columns, row 0 has ${cols}`);
    row.forEach((v, j) => requireNonNegative(`count [${i}][${j}]`, v));
  });
  const rowSums = table.map((row) => row.reduce((s, v) => s + v, 0));
  const colSums = Array.from({ length: cols }, (_, j) => table.reduce((s, row) => s + (row[j] as number), 0));
  const rows = rowSums.flatMap((s, i) => (s > 0 ? [i] : []));
  const keptCols = colSums.flatMap((s, j) => (s > 0 ? [j] : []));
  const droppedRows = rowSums.flatMap((s, i) => (s > 0 ? [] : [i]));
  const droppedColumns = colSums.flatMap((s, j) => (s > 0 ? [] : [j]));
  const df = rows.length < 2 || keptCols.length < 2 ? 0 : (rows.length - 1) * (keptCols.length - 1);
  if (df === 0) return { statistic: 0, df, pValue: 1, droppedRows, droppedColumns };
  const total = rowSums.reduce((s, v) => s + v, 0);
  let statistic = 0;
  for (const i of rows) {
    for (const j of keptCols) {
      const expected = ((rowSums[i] as number) * (colSums[j] as number)) / total;
      const d = ((table[i] as readonly number[])[j] as number) - expected;
      statistic += (d * d) / expected;
    }
  }
  return { statistic, df, pValue: chiSquareSf(statistic, df), droppedRows, droppedColumns };
}
