/**
 * Canonical JSON after RFC 8785 (JSON Canonicalization Scheme, JCS):
 *   - no whitespace between tokens (§3.2.1);
 *   - strings and numbers serialised as ECMAScript JSON.stringify does (§3.2.2.2, §3.2.2.3: JCS adopts
 *     the ES2019 Number-to-String algorithm and JSON.stringify's string escaping);
 *   - object properties sorted by their names as arrays of UTF-16 code units (§3.2.3), which is what
 *     Array.prototype.sort does with no comparator.
 * Where this deviates from JCS, and why:
 *   - Input is a JavaScript value, usually from JSON.parse. Duplicate property names (forbidden by I-JSON,
 *     RFC 7493 §2.3) are therefore already collapsed by the parser to the last one instead of being rejected.
 *   - Properties whose value is `undefined` are omitted, as JSON.stringify omits them, so an in-memory value
 *     and its parsed serialisation canonicalise identically. JCS has no `undefined`.
 * Like JCS, it refuses NaN and ±Infinity (not representable in JSON), lone surrogates (not Unicode, I-JSON
 * §2.1), and anything that is not null, boolean, number, string, array or plain object (e.g. bigint).
 */
export class CanonicalJsonError extends Error {
  constructor(message: string, readonly path: string) {
    super(`${message} at ${path || '(root)'}`);
    this.name = 'CanonicalJsonError';
  }
}

const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

export function canonicalJson(value: unknown): string {
  return write(value, '');
}

function write(value: unknown, path: string): string {
  if (value === null) return 'null';
  switch (typeof value) {
    case 'boolean':
      return value ? 'true' : 'false';
    case 'number':
      if (!Number.isFinite(value)) throw new CanonicalJsonError(`non-finite number ${String(value)}`, path);
      return JSON.stringify(value);
    case 'string':
      return writeString(value, path);
    case 'object':
      break;
    default:
      throw new CanonicalJsonError(`a ${typeof value} has no JSON form`, path);
  }
  if (Array.isArray(value)) {
    return `[${value.map((item, i) => (item === undefined ? 'null' : write(item, `${path}[${i}]`))).join(',')}]`;
  }
  const proto = Object.getPrototypeOf(value) as unknown;
  if (proto !== Object.prototype && proto !== null) throw new CanonicalJsonError('not a plain object', path);
  const record = value as Record<string, unknown>;
  const parts: string[] = [];
  for (const key of Object.keys(record).sort()) {
    const item = record[key];
    if (item === undefined) continue;
    parts.push(`${writeString(key, path)}:${write(item, `${path}.${key}`)}`);
  }
  return `{${parts.join(',')}}`;
}

function writeString(value: string, path: string): string {
  if (LONE_SURROGATE.test(value)) throw new CanonicalJsonError('string holds a lone surrogate', path);
  return JSON.stringify(value);
}
