/** Number formatting shared by the terminal summary and the HTML report. Never prints NaN or Infinity. */

export function fmtNumber(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  if (Number.isInteger(value) && Math.abs(value) < 1e15) return value.toLocaleString('en-US');
  const abs = Math.abs(value);
  if (abs !== 0 && (abs < 1e-3 || abs >= 1e7)) return value.toExponential(Math.max(0, digits - 1));
  return value.toLocaleString('en-US', { maximumSignificantDigits: Math.max(digits, 1) + (abs >= 1 ? Math.floor(Math.log10(abs)) : 0) });
}

export function fmtShare(value: number | null | undefined, digits = 1): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  return `${(value * 100).toFixed(digits)}%`;
}

export function fmtInterval(low: number | null, high: number | null): string {
  if (low === null || high === null || !Number.isFinite(low) || !Number.isFinite(high)) return '—';
  return `[${fmtNumber(low)}, ${fmtNumber(high)}]`;
}

export function fmtCell(value: unknown): string {
  if (value === null || value === undefined) return '—';
  if (typeof value === 'number') return fmtNumber(value);
  if (typeof value === 'bigint') return value.toString();
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'string') return value;
  return JSON.stringify(value, (_k, v: unknown) => (typeof v === 'bigint' ? v.toString() : v));
}

export function fmtSegment(segment: Record<string, string>): string {
  const parts = Object.entries(segment).map(([k, v]) => `${k}=${v}`);
  return parts.length ? parts.join(', ') : '(all rows)';
}
