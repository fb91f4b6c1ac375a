/**
 * The one formatter for counts of the whole app (check messages, the UI, the HTML report, the terminal):
 * thousands separated ("30,000"), and counted nouns in words ("no places", "1 place", "2 places").
 */

// Built once: Number.prototype.toLocaleString builds a new Intl.NumberFormat on every call (ECMA-402 §19.4.1).
const COUNT = new Intl.NumberFormat('en-US', { maximumFractionDigits: 0 });

/** A count for people: 30000 -> "30,000"; a fraction is rounded to a whole number. */
export function countText(n: number | bigint): string {
  if (typeof n === 'bigint') return COUNT.format(n);
  return Number.isFinite(n) ? COUNT.format(n) : String(n);
}

/**
 * A count with its noun: "no places", "1 place", "2 places", "30,000 rows". The plural is the noun with an
 * s unless given (`counted(3, 'policy', 'policies')`); `zero` words a count of 0 otherwise ("0 places").
 */
export function counted(n: number, noun: string, plural = `${noun}s`, zero: 'no' | 'digit' = 'no'): string {
  if (n === 0 && zero === 'no') return `no ${plural}`;
  return `${countText(n)} ${n === 1 ? noun : plural}`;
}
