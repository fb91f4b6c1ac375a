import { requireProbability } from './validate.ts';

export interface BhResult {
  /** BH-adjusted p-values in input order: min over j ≥ rank of p_(j)·m/j, capped at 1. */
  readonly adjusted: number[];
  /** adjusted ≤ q, which is exactly the step-up rule: reject p_(1..k), k = max{i : p_(i) ≤ i·q/m}. */
  readonly rejected: boolean[];
  readonly rejections: number;
}

/** Benjamini–Hochberg step-up procedure controlling the false discovery rate at q (Benjamini & Hochberg, JRSS B 57, 1995). */
export function benjaminiHochberg(pValues: readonly number[], q: number): BhResult {
  if (!(q > 0 && q < 1)) throw new RangeError(`FDR level q must be in (0, 1), got ${String(q)}`);
  pValues.forEach((p, i) => requireProbability(`p-value ${i}`, p));
  const m = pValues.length;
  const order = pValues.map((_, i) => i).sort((a, b) => (pValues[a] as number) - (pValues[b] as number));
  const adjusted = new Array<number>(m);
  let running = 1;
  for (let rank = m; rank >= 1; rank--) {
    const i = order[rank - 1] as number;
    running = Math.min(running, ((pValues[i] as number) * m) / rank);
    adjusted[i] = running;
  }
  const rejected = adjusted.map((a) => a <= q);
  return { adjusted, rejected, rejections: rejected.filter(Boolean).length };
}
