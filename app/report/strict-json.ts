/**
 * JSON (RFC 8259) read strictly, for files whose digest or signature is checked: a duplicate key in an
 * object is refused (RFC 8259 §4 leaves duplicates to the reader, and JSON.parse keeps the last one, so
 * a second "verdict" added to a signed report would be read instead of the signed one), and so is a
 * number that a 64-bit float cannot hold (1e400 would read as Infinity, which no digest can encode).
 * Errors name the line, the column and the path of the value.
 */
export class StrictJsonError extends Error {
  override readonly name = 'StrictJsonError';
}

const NUMBER = /-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/y;
// eslint-disable-next-line no-control-regex -- matching control characters is the point here
const STRING = /"(?:[^"\\\u0000-\u001f]|\\(?:["\\/bfnrt]|u[0-9a-fA-F]{4}))*"/y;
const SPACE = /[ \t\n\r]*/y;

export function parseStrictJson(text: string): unknown {
  let at = 0;

  const where = (pos: number): string => {
    const before = text.slice(0, pos);
    const line = before.split('\n').length;
    return `line ${line}, column ${pos - before.lastIndexOf('\n')}`;
  };
  const fail = (message: string, pos = at): never => {
    throw new StrictJsonError(`${message} at ${where(pos)}`);
  };
  const skip = (): void => {
    SPACE.lastIndex = at;
    SPACE.exec(text);
    at = SPACE.lastIndex;
  };
  const match = (re: RegExp): string | null => {
    re.lastIndex = at;
    const m = re.exec(text);
    if (!m) return null;
    at = re.lastIndex;
    return m[0];
  };

  function value(path: string, depth: number): unknown {
    if (depth > 512) fail('JSON nested too deeply');
    skip();
    const ch = text[at];
    if (ch === '{') {
      at++;
      const out: Record<string, unknown> = {};
      const seen = new Set<string>();
      skip();
      if (text[at] === '}') { at++; return out; }
      for (;;) {
        skip();
        const keyAt = at;
        const raw = match(STRING);
        if (raw === null) fail('expected a quoted key');
        const key = JSON.parse(raw as string) as string;
        if (seen.has(key)) fail(`duplicate key ${JSON.stringify(key)} in ${path || 'the top-level object'}; a report with two values for one key is ambiguous and is not read`, keyAt);
        seen.add(key);
        skip();
        if (text[at] !== ':') fail('expected ":"');
        at++;
        const v = value(path ? `${path}.${key}` : key, depth + 1);
        Object.defineProperty(out, key, { value: v, enumerable: true, writable: true, configurable: true });
        skip();
        if (text[at] === ',') { at++; continue; }
        if (text[at] === '}') { at++; return out; }
        fail('expected "," or "}"');
      }
    }
    if (ch === '[') {
      at++;
      const out: unknown[] = [];
      skip();
      if (text[at] === ']') { at++; return out; }
      for (;;) {
        out.push(value(`${path}[${out.length}]`, depth + 1));
        skip();
        if (text[at] === ',') { at++; continue; }
        if (text[at] === ']') { at++; return out; }
        fail('expected "," or "]"');
      }
    }
    if (ch === '"') {
      const raw = match(STRING);
      if (raw === null) fail('malformed string (an unescaped control character or a bad escape)');
      return JSON.parse(raw as string);
    }
    for (const [word, v] of [['true', true], ['false', false], ['null', null]] as const) {
      if (text.startsWith(word, at)) { at += word.length; return v; }
    }
    const numberAt = at;
    const raw = match(NUMBER);
    if (raw === null) return fail(ch === undefined ? 'unexpected end of the file' : `unexpected ${JSON.stringify(ch)}`);
    const n = Number(raw);
    if (!Number.isFinite(n)) fail(`the number ${raw} in ${path || 'the file'} is too large for a 64-bit float (it would read as ${n}); no report holds such a number`, numberAt);
    return n;
  }

  const result = value('', 0);
  skip();
  if (at < text.length) fail('unexpected text after the JSON value');
  return result;
}
