/**
 * Text from a log or a report made safe to print on a terminal: every C0 control (U+0000–U+001F), DEL
 * (U+007F) and C1 control (U+0080–U+009F, ECMA-48 §5.2) becomes a visible escape, as do the bidirectional
 * overrides and isolates (U+202A–U+202E, U+2066–U+2069, Unicode TR #9), so a value cannot move the cursor,
 * erase a line, recolour the output or reorder what is shown. The one helper every CLI printer uses for
 * values it did not write itself.
 */
// eslint-disable-next-line no-control-regex -- matching control characters is the point here
const CONTROLS = /[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/g;

const NAMED: Record<string, string> = { '\n': '\\n', '\r': '\\r', '\t': '\\t' };

export function terminalText(value: unknown): string {
  return String(value).replace(CONTROLS, (ch) => NAMED[ch] ?? (ch.charCodeAt(0) <= 0xff ? `\\x${ch.charCodeAt(0).toString(16).padStart(2, '0')}` : `\\u${ch.charCodeAt(0).toString(16).padStart(4, '0')}`));
}
