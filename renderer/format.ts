import type { Cell } from '../app/core/table.ts';

/** Display formatting only; every number shown was computed in app/core. */
export function formatValue(value: Cell | undefined): string {
  if (value === null || value === undefined) return '—';
  if (typeof value === 'number') {
    if (Number.isInteger(value)) return value.toLocaleString('en');
    if (!Number.isFinite(value)) return String(value);
    const abs = Math.abs(value);
    if (abs !== 0 && (abs < 0.001 || abs >= 1e9)) return value.toExponential(3);
    // Counts and sums keep every integer digit; only the fraction is shortened.
    return abs >= 1000 ? value.toLocaleString('en', { maximumFractionDigits: 0 }) : value.toLocaleString('en', { maximumSignificantDigits: 4 });
  }
  if (typeof value === 'bigint') return value.toLocaleString('en');
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'string') return value;
  return JSON.stringify(value, (_k, v: unknown) => (typeof v === 'bigint' ? v.toString() : v));
}

export function formatShare(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  return `${(value * 100).toLocaleString('en', { maximumSignificantDigits: 3 })}%`;
}

export function segmentLabel(segment: Readonly<Record<string, string>>): string {
  const parts = Object.entries(segment).map(([k, v]) => `${k}=${v}`);
  return parts.length === 0 ? 'all rows' : parts.join(', ');
}
