import type { Cell } from '../app/core/table.ts';

// Number.prototype.toLocaleString builds a new Intl.NumberFormat on every call (ECMA-402 §19.4.1), which is slow
// for a table of hundreds of cells; the same formats, built once, give the same text.
const INTEGER = new Intl.NumberFormat('en');
const WHOLE = new Intl.NumberFormat('en', { maximumFractionDigits: 0 });
const FOUR_DIGITS = new Intl.NumberFormat('en', { maximumSignificantDigits: 4 });
const THREE_DIGITS = new Intl.NumberFormat('en', { maximumSignificantDigits: 3 });

/** Display formatting only; every number shown was computed in app/core. */
export function formatValue(value: Cell | undefined): string {
  if (value === null || value === undefined) return '—';
  if (typeof value === 'number') {
    if (Number.isInteger(value)) return INTEGER.format(value);
    if (!Number.isFinite(value)) return String(value);
    const abs = Math.abs(value);
    if (abs !== 0 && (abs < 0.001 || abs >= 1e9)) return value.toExponential(3);
    // Counts and sums keep every integer digit; only the fraction is shortened.
    return abs >= 1000 ? WHOLE.format(value) : FOUR_DIGITS.format(value);
  }
  if (typeof value === 'bigint') return value.toLocaleString('en');
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'string') return value;
  return JSON.stringify(value, (_k, v: unknown) => (typeof v === 'bigint' ? v.toString() : v));
}

export function formatShare(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  return `${THREE_DIGITS.format(value * 100)}%`;
}

export function segmentLabel(segment: Readonly<Record<string, string>>): string {
  const parts = Object.entries(segment).map(([k, v]) => `${k}=${v}`);
  return parts.length === 0 ? 'all rows' : parts.join(', ');
}
