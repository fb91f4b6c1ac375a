/**
 * Text forms of DuckDB values shared by both converters (native values and Arrow vectors), so the two
 * cannot drift apart. Rules: app/core/table.ts header. Inputs are DuckDB's physical encodings:
 * microseconds / days since 1970-01-01 UTC, microseconds since midnight, unscaled decimal integers.
 */

const MICROS_PER_DAY = 86_400_000_000n;
// DuckDB stores ±infinity timestamps as ±(2^63 - 1) and ±infinity dates as ±(2^31 - 1) (duckdb/common/types/timestamp.hpp, date.hpp).
const TIMESTAMP_INFINITY = 9_223_372_036_854_775_807n;
const DATE_INFINITY = 2_147_483_647;

function pad(n: number | bigint, width: number): string {
  return String(n).padStart(width, '0');
}

/** Proleptic Gregorian civil date from days since 1970-01-01 (Howard Hinnant, "chrono-compatible low-level date algorithms", civil_from_days). */
function civilFromDays(days: number): { y: number; m: number; d: number } {
  const z = days + 719_468;
  const era = Math.floor(z / 146_097);
  const doe = z - era * 146_097;
  const yoe = Math.floor((doe - Math.floor(doe / 1460) + Math.floor(doe / 36_524) - Math.floor(doe / 146_096)) / 365);
  const doy = doe - (365 * yoe + Math.floor(yoe / 4) - Math.floor(yoe / 100));
  const mp = Math.floor((5 * doy + 2) / 153);
  const d = doy - Math.floor((153 * mp + 2) / 5) + 1;
  const m = mp < 10 ? mp + 3 : mp - 9;
  return { y: era * 400 + yoe + (m <= 2 ? 1 : 0), m, d };
}

function yearText(y: number): string {
  // ISO 8601 expanded years: four digits, a sign and more digits outside 0000..9999.
  if (y >= 0 && y <= 9999) return pad(y, 4);
  return (y < 0 ? '-' : '+') + pad(Math.abs(y), 6);
}

export function formatDate(days: number): string {
  if (days === DATE_INFINITY) return 'infinity';
  if (days === -DATE_INFINITY) return '-infinity';
  const { y, m, d } = civilFromDays(days);
  return `${yearText(y)}-${pad(m, 2)}-${pad(d, 2)}`;
}

/** "HH:MM:SS" plus ".ffffff" when the fraction is not zero (DuckDB prints TIME the same way). */
export function formatTime(microsOfDay: bigint): string {
  const s = microsOfDay / 1_000_000n;
  const frac = microsOfDay % 1_000_000n;
  const text = `${pad(s / 3600n, 2)}:${pad((s / 60n) % 60n, 2)}:${pad(s % 60n, 2)}`;
  return frac === 0n ? text : `${text}.${pad(frac, 6)}`;
}

/** ISO-8601 UTC with exactly six fraction digits, "YYYY-MM-DDTHH:MM:SS.ffffffZ". */
export function formatTimestamp(micros: bigint): string {
  if (micros === TIMESTAMP_INFINITY) return 'infinity';
  if (micros === -TIMESTAMP_INFINITY) return '-infinity';
  let days = micros / MICROS_PER_DAY;
  let rest = micros % MICROS_PER_DAY;
  if (rest < 0n) { rest += MICROS_PER_DAY; days -= 1n; }
  const s = rest / 1_000_000n;
  return `${formatDate(Number(days))}T${pad(s / 3600n, 2)}:${pad((s / 60n) % 60n, 2)}:${pad(s % 60n, 2)}.${pad(rest % 1_000_000n, 6)}Z`;
}

/** Floor division so that instants before 1970 round toward the past, as DuckDB's casts do. */
export function floorDiv(a: bigint, b: bigint): bigint {
  const q = a / b;
  return (a % b !== 0n && (a < 0n) !== (b < 0n)) ? q - 1n : q;
}

/** Plain decimal notation with exactly `scale` fraction digits, e.g. (-1250n, 2) -> "-12.50". */
export function formatDecimal(unscaled: bigint, scale: number): string {
  const negative = unscaled < 0n;
  const digits = (negative ? -unscaled : unscaled).toString();
  if (scale === 0) return (negative ? '-' : '') + digits;
  const padded = digits.padStart(scale + 1, '0');
  return `${negative ? '-' : ''}${padded.slice(0, -scale)}.${padded.slice(-scale)}`;
}

export function bytesToHex(bytes: Uint8Array): string {
  let out = '';
  for (const b of bytes) out += b.toString(16).padStart(2, '0');
  return out;
}
