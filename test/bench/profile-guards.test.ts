/**
 * The profile screens text by its first character before TRY_CAST (app/core/scan/profile.ts). The
 * screen must never drop a value DuckDB itself would parse: checked here against DuckDB's own
 * TRY_CAST on hand-picked edge cases and on seeded random strings over the characters that matter.
 */
import { afterAll, beforeAll, expect, it } from 'vitest';
import { mayParse } from '../../app/core/scan/profile.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';

const EDGE = [' 2020-01-01', '\t2020-01-01', '\n2020-01-01', '\v2020-01-01', '\f2020-01-01', '\r2020-01-01', '-2020-01-01',
  '2020-01-01 10:00:00', 'infinity', 'Infinity', '-infinity', 'inf', 'INF', '-inf', 'epoch', 'EPOCH', ' epoch', 'nan', 'NaN', 'NAN',
  '+5', '.5', '-.5', '1e5', '1_000', ' \t12', 'x12', '\u00a012', '', ' ', 'e', 'i', 'n', 'ios', 'east-ridge', 'north-harbor', 'd-00000001'];

/** xorshift32 (Marsaglia 2003), seeded, so a failure names a reproducible string. */
function randomStrings(count: number, seed: number): string[] {
  const alphabet = [' ', '\t', '0', '1', '2', '9', '+', '-', '.', ':', 'e', 'E', 'i', 'I', 'n', 'N', 'f', 'F', 'a', 'A', 't', 'y', 'o', 'p', 'c', 'h', 'T', 'Z', 'x', '_', 'inf', 'nan', 'epoch', 'infinity', '2020-01-01'];
  let x = seed >>> 0 || 1;
  const next = () => {
    x ^= x << 13; x >>>= 0;
    x ^= x >>> 17;
    x ^= x << 5; x >>>= 0;
    return x;
  };
  return Array.from({ length: count }, () => Array.from({ length: 1 + (next() % 5) }, () => alphabet[next() % alphabet.length]).join(''));
}

let engine: NativeEngine;
beforeAll(async () => {
  engine = await createNativeEngine({ threads: 1 });
});
afterAll(async () => {
  await engine?.close();
});

it('no value DuckDB parses as a number or a timestamp is screened out', async () => {
  const values = [...EDGE, ...randomStrings(20_000, 20260302)];
  const list = values.map((v) => `'${v.replaceAll("'", "''")}'`).join(', ');
  const t = await engine.query(`SELECT s FROM (SELECT unnest([${list}]) AS s)
    WHERE (TRY_CAST(s AS DOUBLE) IS NOT NULL OR TRY_CAST(s AS TIMESTAMP) IS NOT NULL) AND NOT ${mayParse('s')}`);
  expect({ rows: t.rowCount, names: t.names }).toEqual({ rows: 0, names: ['s'] });
  // the screen is not vacuous: these parse and pass it, these do not parse and are screened out
  const kept = await engine.query(`SELECT s FROM (SELECT unnest(['2020-01-01', 'ios', 'north-harbor', 'd-1', 'Infinity', 'loyal', 'NaN', 'epoch', 'east']) AS s) WHERE ${mayParse('s')}`);
  expect(kept.columns[0]).toEqual(['2020-01-01', 'Infinity', 'NaN', 'epoch']);
});
