/**
 * Exact sums of integers held in doubles, without BigInt on the way: the sums an audit merged from parts
 * replays (replay.ts) are Σ rows·t over integer-valued doubles t = round_half_even(term·2^s), |t| < 2^125,
 * whose 128-bit total DuckDB turns into a double from a HUGEINT. Each sum is kept in LIMBS signed limbs of
 * 26 bits (limb j weighs 2^(26j)): an integer-valued double splits into them exactly (division by a power of
 * two and floor are exact), a limb times a row count below 2^26 is below 2^52, and a limb is carried into the
 * next before it passes 2^52, so every addition is of integers below 2^53 and exact (IEEE 754: an exact result
 * is returned unrounded). A row count of 2^26 or more (a group of 67M identical rows) is added in BigInt.
 * Only the total becomes a double, as hugeintToDouble forms it from the 128-bit value (app/core/scan/cube-clickhouse.ts).
 */
import { hugeintToDouble } from '../scan/cube-clickhouse.ts';

export const LIMBS = 5;
const BITS = 26;
const BASE = 2 ** BITS;
const CARRY_AT = 2 ** 52;
const WEIGHT_MAX = BASE;
const POW = Array.from({ length: LIMBS }, (_, j) => 2 ** (BITS * j));
const TOP = LIMBS - 1;

/** DuckDB's DOUBLE → HUGEINT cast (round half to even), as a double (exact: every integer it gives is a double). */
export function roundHalfEvenDouble(x: number): number {
  if (!(Math.abs(x) < 2 ** 52)) return x;
  const f = Math.floor(x);
  const diff = x - f;
  return diff > 0.5 ? f + 1 : diff < 0.5 ? f : f % 2 === 0 ? f : f + 1;
}

/** `n` exact sums, each LIMBS limbs of a Float64Array; a BigInt part only for row counts past 2^26. */
export class ExactSums {
  readonly limbs: Float64Array;
  private big: (bigint | undefined)[] | null = null;

  constructor(readonly n: number) {
    this.limbs = new Float64Array(n * LIMBS);
  }

  /** Adds w·t to sum i: t an integer-valued double (|t| < 2^130), w a whole number ≥ 0. */
  add(i: number, t: number, w: number): void {
    if (t === 0 || w === 0) return;
    if (w >= WEIGHT_MAX) {
      const big = (this.big ??= new Array<bigint | undefined>(this.n));
      big[i] = (big[i] ?? 0n) + BigInt(w) * BigInt(t);
      return;
    }
    const L = this.limbs;
    const o = i * LIMBS;
    let x = t < 0 ? -t : t;
    const sw = t < 0 ? -w : w;
    for (let j = TOP; j >= 0 && x > 0; j--) {
      const b = POW[j] as number;
      if (x < b) continue;
      const q = Math.floor(x / b);
      x -= q * b;
      let a = (L[o + j] as number) + q * sw;
      let k = j;
      while (k < TOP && (a >= CARRY_AT || a <= -CARRY_AT)) {
        const c = Math.floor(a / BASE);
        L[o + k] = a - c * BASE;
        k++;
        a = (L[o + k] as number) + c;
      }
      L[o + k] = a;
    }
  }

  /** Whether any sum holds a BigInt part (a row count of 2^26 or more was added). */
  hasBig(): boolean {
    return !!this.big?.some((b) => b !== undefined);
  }

  /** These sums and `more` zero sums after them (a copy). */
  grown(more: number): ExactSums {
    const next = new ExactSums(this.n + more);
    next.limbs.set(this.limbs);
    if (this.big) next.big = this.big.slice();
    return next;
  }

  /** Adds sum j of `other` to sum i: limb by limb (each below 2^52, so the addition is exact), then carried. */
  addSum(i: number, other: ExactSums, j: number): void {
    const L = this.limbs;
    const o = i * LIMBS;
    const p = j * LIMBS;
    for (let k = 0; k < LIMBS; k++) {
      let a = (L[o + k] as number) + (other.limbs[p + k] as number);
      let m = k;
      while (m < TOP && (a >= CARRY_AT || a <= -CARRY_AT)) {
        const c = Math.floor(a / BASE);
        L[o + m] = a - c * BASE;
        m++;
        a = (L[o + m] as number) + c;
      }
      L[o + m] = a;
    }
    const b = other.big?.[j];
    if (b !== undefined) {
      const big = (this.big ??= new Array<bigint | undefined>(this.n));
      big[i] = (big[i] ?? 0n) + b;
    }
  }

  /** Sum i as the exact integer. */
  bigint(i: number): bigint {
    const L = this.limbs;
    const o = i * LIMBS;
    let v = this.big?.[i] ?? 0n;
    for (let j = 0; j < LIMBS; j++) {
      const l = L[o + j] as number;
      if (l !== 0) v += BigInt(l) << BigInt(BITS * j);
    }
    return v;
  }

  /**
   * Sum i as DuckDB's HUGEINT → DOUBLE gives it (hugeintToDouble: the low 64 bits unsigned and the high 64 bits
   * signed, each rounded to a double, then upper·2^64 + lower; upper = −1 as −(2^64 − 1 − lower) − 1), formed
   * from the limbs: each part is an exact integer below 2^52 plus a multiple of 2^52 (or 2^40), added once, and
   * IEEE 754 rounds that one addition correctly, as Number(bigint) rounds.
   */
  double(i: number): number {
    if (this.big?.[i] !== undefined) return hugeintToDouble(this.bigint(i));
    const L = this.limbs;
    const o = i * LIMBS;
    // canonical limbs: 0 <= l_j < 2^26 below the top, the sign in the top limb
    let l0 = L[o] as number, l1 = L[o + 1] as number, l2 = L[o + 2] as number, l3 = L[o + 3] as number, l4 = L[o + 4] as number;
    let c = Math.floor(l0 / BASE); l0 -= c * BASE; l1 += c;
    c = Math.floor(l1 / BASE); l1 -= c * BASE; l2 += c;
    c = Math.floor(l2 / BASE); l2 -= c * BASE; l3 += c;
    c = Math.floor(l3 / BASE); l3 -= c * BASE; l4 += c;
    // bits 0..63 are l0, l1 and the low 12 bits of l2; bits 64.. are the rest
    const l2hi = Math.floor(l2 / 4096);
    const l2lo = l2 - l2hi * 4096;
    const low = l0 + l1 * BASE; // < 2^52, exact
    const upper = l2hi + l3 * 2 ** 14 + l4 * 2 ** 40; // one rounded addition: Number(upper)
    if (upper === -1) return -((2 ** 52 - 1 - low) + (4095 - l2lo) * 2 ** 52) - 1;
    return (low + l2lo * 2 ** 52) + upper * 2 ** 64;
  }
}
