/** The DuckDB dialect: today's spellings of the scan builders (app/core/sql/quote.ts quotes). */
import { nullMark, quotingOf, type Dialect } from './dialect.ts';
import * as quoting from './quote.ts';

const NULL_MARK = nullMark(quoting);

export const duckdb: Dialect = {
  ...quotingOf(quoting),
  name: 'duckdb',
  toDouble: (x) => `CAST(${x} AS DOUBLE)`,
  tryDouble: (x) => `TRY_CAST(${x} AS DOUBLE)`,
  toText: (x) => `CAST(${x} AS VARCHAR)`,
  isNaN: (x) => `isnan(${x})`,
  isFinite: (x) => `isfinite(${x})`,
  countIf: (cond) => `count(*) FILTER (WHERE ${cond})::DOUBLE`,
  sumIf: (x, cond) => `coalesce(sum(${x}) FILTER (WHERE ${cond}), 0)::DOUBLE`,
  minIf: (x, cond) => `min(${x}) FILTER (WHERE ${cond})`,
  maxIf: (x, cond) => `max(${x}) FILTER (WHERE ${cond})`,
  hash64: (x) => `hash(${x})`,
  epochUs: (x) => `epoch_us(CAST(${x} AS TIMESTAMP))`,
  textEpochUs: (x) => `epoch_us(TRY_CAST(${x} AS TIMESTAMP))`,
  isInf: (x) => `isinf(${x})`,
  toBigint: (x) => `CAST(${x} AS BIGINT)`,
  toInteger: (x) => `CAST(${x} AS INTEGER)`,
  numberOf: (column) => `TRY_CAST(${column} AS DOUBLE)`,
  booleanNumber: (column) => `CAST(CAST(${column} AS INTEGER) AS DOUBLE)`,
  notTrue: (cond) => `NOT coalesce(${cond}, false)`,
  truth: 'TRUE',
  timestamp: quoting.timestamp,
  // hash() is a UBIGINT; the HUGEINT sum is exact, and reduced modulo 2^64 it is the same in any row order
  rowHashSum: (values) => `(sum(hash(${values.map((v) => `coalesce(CAST(${v} AS VARCHAR), ${NULL_MARK})`).join(', ')})::HUGEINT) % 18446744073709551616)::UBIGINT`,
  fingerprintHash: 'duckdb hash() of the values as text, summed modulo 2^64',
};
