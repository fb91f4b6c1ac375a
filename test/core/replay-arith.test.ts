/**
 * The arithmetic an audit merged from parts replays (app/core/parts/replay.ts) against DuckDB itself: its
 * DOUBLE → HUGEINT cast (round half to even) and the DOUBLE literals the scans write (app/core/sql/quote.ts),
 * which must hold the double written. The reference for a literal is ECMAScript's Number parse of the same
 * text, which the language specification requires to be correctly rounded (ECMA-262, StringToNumber).
 */
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
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
});
