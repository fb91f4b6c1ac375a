/**
 * hugeintToDouble (app/core/scan/cube-clickhouse.ts) forms the double DuckDB forms from a 128-bit integer,
 * which is not always the correctly rounded one (DuckDB adds two rounded halves): checked against native
 * DuckDB's own CAST(HUGEINT AS DOUBLE) on 3,000 integers of 60 to 127 bits, a third of them with a bit
 * pattern at a rounding tie, where the two differ.
 */
import { describe, expect, it } from 'vitest';
import { hugeintToDouble } from '../../app/core/scan/cube-clickhouse.ts';
import { createNativeEngine } from '../../app/engine/native.ts';

function integers(): bigint[] {
  const out: bigint[] = [];
  let seed = 12345n;
  // a 64-bit linear congruential generator (Knuth's MMIX constants)
  const next = () => { seed = (seed * 6364136223846793005n + 1442695040888963407n) & ((1n << 64n) - 1n); return seed; };
  for (let i = 0; i < 3000; i++) {
    const bits = BigInt(60 + (i % 64));
    let v = ((next() << 64n) | next()) & ((1n << bits) - 1n);
    if (i % 3 === 0) v = ((v >> 11n) << 11n) | (1n << 10n);
    out.push(i % 2 ? -v : v);
  }
  return out;
}

describe('128-bit integer to double as DuckDB casts it', () => {
  it('equals CAST(HUGEINT AS DOUBLE) for every value, where correct rounding differs for some', async () => {
    const values = integers();
    const engine = await createNativeEngine({ threads: 1 });
    try {
      const t = await engine.query(`SELECT CAST(x AS DOUBLE) AS d FROM (SELECT unnest([${values.map((v) => `'${v}'::HUGEINT`).join(',')}]) AS x)`);
      const duck = t.columns[0] as number[];
      expect(values.map(hugeintToDouble)).toEqual(duck);
      expect(values.filter((v, i) => Number(v) !== duck[i]).length).toBeGreaterThan(0);
    } finally {
      await engine.close();
    }
  });
});
