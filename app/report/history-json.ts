/** The history's JSON text (no platform imports: the page and the headless command write the same bytes). */
import type { History } from '../core/compare/history.ts';

export function serializeHistory(h: History): string {
  return `${JSON.stringify(h, null, 2)}\n`;
}

