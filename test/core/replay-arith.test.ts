/**
 * The arithmetic an audit merged from parts replays (app/core/parts/replay.ts) against DuckDB itself: its
 * DOUBLE → HUGEINT cast (round half to even) and the DOUBLE literals the scans write (app/core/sql/quote.ts),
 * which must hold the double written. The reference for a literal is ECMAScript's Number parse of the same
 * text, which the language specification requires to be correctly rounded (ECMA-262, StringToNumber).
 */
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ExactSums } from '../../app/core/parts/exact.ts';
import { roundHalfEven, scaleOf } from '../../app/core/parts/replay.ts';
import { double } from '../../app/core/sql/quote.ts';

let instance: DuckDBInstance;
let query: (sql: string) => Promise<unknown[]>;
beforeAll(async () => {
  instance = await DuckDBInstance.create(':memory:');
  const c = await instance.connect();
  query = async (sql) => (await c.runAndReadAll(sql)).getRows()[0] as unknown[];
});
afterAll(() => instance.closeSync());

describe('replayed arithmetic equals DuckDB\'s', () => {
  it('a DOUBLE literal holds exactly the double written (a bare decimal literal would not: 0.19380120266269746 reads as …743)', async () => {
    const values = [0.19380120266269746, 0.22591346530909492, 1 / 3, 2 ** -70, 123456.789e10, -0.1];
    const row = await query(`SELECT ${values.map((v) => double(v)).join(', ')}`);
    expect(row).toEqual(values);
    // the bare literal's DECIMAL → DOUBLE cast rounds twice (why quote.ts writes text)
    expect((await query('SELECT CAST(0.19380120266269746 AS DOUBLE)'))[0]).not.toBe(0.19380120266269746);
  });

  it('rounds x·2^s to an integer as DuckDB\'s CAST(x AS HUGEINT) does (half to even), also past 2^53', async () => {
    const xs = [2.5, 3.5, -2.5, -3.5, 0.49999999999999994, 1.5, -0.5, 4503599627370495.5, 2 ** 60 + 2 ** 9, -(2 ** 100), 123456.5];
    const row = await query(`SELECT ${xs.map((x) => `CAST(${double(x)} AS HUGEINT)`).join(', ')}`);
    expect(xs.map(roundHalfEven)).toEqual(row);
  });

  it('forms the cube query\'s scale 2^floor(124 − log2(n + 1) − log2(bound))', async () => {
    const cases: [number, number][] = [[1, 1000], [0.5, 125_000], [499.99, 3_000_000], [1e-9, 7], [3e250, 10]];
    for (const [bound, n] of cases) {
      const [k] = await query(`SELECT CAST(pow(2, least(1000, greatest(-1000, floor(124 - log2(${n} + 1) - log2(greatest(${double(bound)}, 1e-300)))))) AS DOUBLE)`);
      expect(scaleOf(bound, n)).toBe(k);
    }
    expect(scaleOf(Infinity, 3)).toBeNull();
  });

  it('adds rows × integers in 26-bit limbs to the double DuckDB forms from the HUGEINT sum (CAST(sum(x::HUGEINT · w) AS DOUBLE))', async () => {
    // integer-valued doubles up to 2^123 of both signs (sums kept inside HUGEINT) (the replay's terms), with row counts up to 2^27 (past the BigInt edge 2^26)
    let seed = 7;
    const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    const cases: [number, number][][] = [
      [[2 ** 123, 1], [-(2 ** 123), 1], [3, 1]],
      [[-1, 1]],
      [[-(2 ** 64), 1], [1, 1]],
      [[2 ** 64 - 2 ** 11, 1], [2 ** 10, 1]],
      [[-(2 ** 70) + 2 ** 17, 3], [-5, 2 ** 27]],
      Array.from({ length: 400 }, () => [Math.round((rand() - 0.45) * 2 ** 53) * 2 ** Math.floor(rand() * 40), 1 + Math.floor(rand() * 2 ** 20)] as [number, number]),
      Array.from({ length: 400 }, () => [Math.round((rand() - 0.5) * 2 ** 40), 1 + Math.floor(rand() * 3)] as [number, number]),
    ];
    for (const terms of cases) {
      const sums = new ExactSums(1);
      for (const [t, w] of terms) sums.add(0, t, w);
      const values = terms.map(([t, w]) => `(CAST(${double(t)} AS HUGEINT), ${w}::HUGEINT)`).join(', ');
      const [want, exact] = await query(`SELECT CAST(sum(t * w) AS DOUBLE), CAST(sum(t * w) AS VARCHAR) FROM (VALUES ${values}) AS v(t, w)`);
      expect(sums.bigint(0).toString()).toBe(exact);
      expect(sums.double(0)).toBe(want);
    }
  });
});

