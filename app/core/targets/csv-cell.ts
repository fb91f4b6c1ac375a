/**
 * Spreadsheet formula neutralisation for CSV this tool writes (OWASP, "CSV Injection"): a cell starting
 * with = + - @, a tab or a carriage return is written with a leading apostrophe, so a spreadsheet shows it
 * as text instead of running it as a formula; reading such a file back removes that one apostrophe.
 */
const FORMULA_START = /^[=+\-@\t\r]/;

export function neutraliseCell(value: string): string {
  return FORMULA_START.test(value) ? `'${value}` : value;
}

export function restoreCell(value: string): string {
  return value.startsWith("'") && FORMULA_START.test(value.slice(1)) ? value.slice(1) : value;
}

/** One cell: neutralised against spreadsheet formulas, then quoted as RFC 4180 needs. */
export function csvField(raw: string): string {
  const value = neutraliseCell(raw);
  return /[",\r\n]/.test(value) || value !== value.trim() ? `"${value.replaceAll('"', '""')}"` : value;
}
