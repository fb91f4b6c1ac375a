/**
 * Seeded pseudo-random numbers for the sample-data generator: identical sequences on every run and
 * machine (32-bit integer arithmetic only).
 */

/** mulberry32 (Tommy Ettinger, 2017, public domain): 32-bit outputs; here it spreads a seed over xoshiro's state. */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return (t ^ (t >>> 14)) >>> 0;
  };
}

const TWO_POW_32 = 4294967296;

/** mulberry32 scaled to [0, 1): the small seeded stream the tests draw from. */
export function mulberry32Unit(seed: number): () => number {
  const next = mulberry32(seed);
  return () => next() / TWO_POW_32;
}
const TWO_POW_53 = 9007199254740992;

/** xoshiro128** 1.1 (Blackman & Vigna, "Scrambled linear pseudorandom number generators", ACM TOMS 2021; prng.di.unimi.it). */
export class Xoshiro128 {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;

  constructor(seed: number) {
    const next = mulberry32(seed);
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** Next raw output, an unsigned 32-bit integer. */
  nextUint32(): number {
    const s1 = this.s1;
    const x = Math.imul(s1, 5);
    const result = Math.imul((x << 7) | (x >>> 25), 9) >>> 0;
    const t = s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = (this.s3 << 11) | (this.s3 >>> 21);
    return result;
  }

  /** Uniform on [0, 1) with 32-bit resolution. */
  uniform(): number {
    return this.nextUint32() / TWO_POW_32;
  }

  /** Uniform on [0, 1) with 53-bit resolution (two outputs). */
  uniform53(): number {
    const hi = this.nextUint32() >>> 5;
    const lo = this.nextUint32() >>> 6;
    return (hi * 67108864 + lo) / TWO_POW_53;
  }
}
