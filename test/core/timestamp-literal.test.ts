/**
 * TIMESTAMP literals written by app/core/sql/quote.ts read back, in DuckDB itself, as the microseconds
 * they were written from: the reference is DuckDB's own epoch_us.
 */
import { afterAll, beforeAll, expect, it } from 'vitest';
import { timestamp } from '../../app/core/sql/quote.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';

let engine: NativeEngine;
beforeAll(async () => { engine = await createNativeEngine(); });
afterAll(async () => engine?.close());

it.each([
  0, 1, 999, 1000, 1_773_100_800_000_000, 1_773_100_800_123_456, -1, -1_000_001, -9_007_199_254_740_991, 9_007_199_254_740_991,
])('%i µs round-trips through DuckDB', async (us) => {
  const t = await engine.query(`SELECT epoch_us(${timestamp(us)}) AS us`);
  expect(Number(t.columns[0]?.[0])).toBe(us);
});

it('writes a readable literal', () => {
  expect(timestamp(1_773_100_800_123_456)).toBe("TIMESTAMP '2026-03-10 00:00:00.123456'");
});
