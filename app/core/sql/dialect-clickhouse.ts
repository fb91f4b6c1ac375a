/**
 * The ClickHouse dialect, for release 18.16 (Debian's) and current releases alike. Differences from the
 * portable core: -If aggregate combinators instead of FILTER (WHERE ...); minIf/maxIf answer 0, not NULL,
 * over no rows, so they are guarded by a count; text parses with toFloat64OrNull; sums use sumKahan
 * (compensated summation, Kahan 1965), whose error does not grow with the row count, so sums of many
 * shards agree with DuckDB's to far better than 1e-12 relative on audit-sized data.
 * Measured on 18.16 (test/engine/clickhouse.test.ts): numeric literals in SQL parse exactly and Float64
 * values print exactly (shortest round-trip), but text parsed as a number (toFloat64('…'), TabSeparated
 * input) can be one unit in the last place off, so tryDouble is for text columns only and test data is
 * loaded as RowBinary.
 */
import { nullMark, quotingOf, type Dialect } from './dialect.ts';
import * as quoting from './quote-clickhouse.ts';

const NULL_MARK = nullMark(quoting);

export const clickhouse: Dialect = {
  ...quotingOf(quoting),
  name: 'clickhouse',
  toDouble: (x) => `toFloat64(${x})`,
  tryDouble: (x) => `toFloat64OrNull(toString(${x}))`,
  toText: (x) => `toString(${x})`,
  isNaN: (x) => `isNaN(${x})`,
  isFinite: (x) => `isFinite(${x})`,
  countIf: (cond) => `toFloat64(countIf(${cond}))`,
  sumIf: (x, cond) => `ifNull(toFloat64(sumKahanIf(toFloat64(${x}), ${cond})), 0)`,
  minIf: (x, cond) => `if(countIf(${cond}) = 0, NULL, minIf(${x}, ${cond}))`,
  maxIf: (x, cond) => `if(countIf(${cond}) = 0, NULL, maxIf(${x}, ${cond}))`,
  hash64: (x) => `cityHash64(${x})`,
  epochUs: (x) => `(toInt64(toUInt32(toDateTime(${x}))) * 1000000)`,
  // parseDateTimeBestEffort reads ISO 8601 and the common log spellings; it is not DuckDB's TIMESTAMP cast (README, "Where the log lives")
  textEpochUs: (x) => `(toInt64(toUInt32(parseDateTimeBestEffortOrNull(${x}))) * 1000000)`,
  isInf: (x) => `isInfinite(${x})`,
  toBigint: (x) => `toInt64(${x})`,
  toInteger: (x) => `toInt32(${x})`,
  // a number column is read as a number (text parsing is 1 ulp off on 18.16); only text is parsed
  numberOf: (column, kind) => (kind === 'text' ? `toFloat64OrNull(${column})` : kind === 'numeric' || kind === 'boolean' ? `toFloat64(${column})` : 'CAST(NULL AS Nullable(Float64))'),
  booleanNumber: (column) => `toFloat64(${column})`,
  notTrue: (cond) => `NOT ifNull(${cond}, 0)`,
  truth: '1 = 1',
  // DateTime holds whole seconds in 18.16; a window edge between seconds is written against epoch microseconds instead
  timestamp: (us) => {
    if (!Number.isSafeInteger(us) || us % 1_000_000 !== 0 || us < 0 || us >= 2 ** 32 * 1e6) return null;
    return `toDateTime(${String(us / 1_000_000)})`;
  },
  // a UInt64 sum wraps modulo 2^64, which is what makes it independent of row order and shard split
  rowHashSum: (values) => `sum(cityHash64(${values.map((v) => `ifNull(toString(${v}), ${NULL_MARK})`).join(', ')}))`,
  fingerprintHash: 'clickhouse cityHash64() of the values as text, summed modulo 2^64',
};
