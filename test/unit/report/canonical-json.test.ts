import { describe, expect, it } from 'vitest';
import { canonicalJson } from '../../../app/report/canonical-json.ts';

// Published JCS test vectors: cyberphone/json-canonicalization testdata/input + testdata/output (the RFC 8785
// authors' repository; arrays, french, structures, unicode, values, weird), as reproduced in the fc library's
// jcs test (read from that source, not from memory). values.json is also the example of RFC 8785 §3.2.2.
const VECTORS: { name: string; input: string; output: string }[] = [
  { name: 'arrays.json', input: '[56,{"d":true,"10":null,"1":[]}]', output: '[56,{"1":[],"10":null,"d":true}]' },
  {
    name: 'french.json (sorting ignores locale)',
    input: '{"peach":"This sorting order","péché":"is wrong according to French","pêche":"but canonicalization MUST","sin":"ignore locale"}',
    output: '{"peach":"This sorting order","péché":"is wrong according to French","pêche":"but canonicalization MUST","sin":"ignore locale"}',
  },
  {
    name: 'structures.json',
    input: '{"1":{"f":{"f":"hi","F":5},"\\n":56.0},"10":{},"":"empty","a":{},"111":[{"e":"yes","E":"no"}],"A":{}}',
    output: '{"":"empty","1":{"\\n":56,"f":{"F":5,"f":"hi"}},"10":{},"111":[{"E":"no","e":"yes"}],"A":{},"a":{}}',
  },
  { name: 'unicode.json (no normalisation)', input: '{"Unnormalized Unicode":"A\\u030a"}', output: '{"Unnormalized Unicode":"A\u030a"}' },
  {
    name: 'values.json (RFC 8785 §3.2.2 example)',
    input: '{"numbers":[333333333.33333329,1E30,4.50,2e-3,0.000000000000000000000000001],"string":"\\u20ac$\\u000F\\u000aA\'\\u0042\\u0022\\u005c\\\\\\"\\/","literals":[null,true,false]}',
    output: '{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],"string":"€$\\u000f\\nA\'B\\"\\\\\\\\\\"/"}',
  },
  {
    name: 'weird.json (UTF-16 code unit order, RFC 8785 §3.2.3)',
    input: '{"\\u20ac":"Euro Sign","\\r":"Carriage Return","\\u000a":"Newline","1":"One","\\u0080":"Control\\u007f","\\ud83d\\ude02":"Smiley","\\u00f6":"Latin Small Letter O With Diaeresis","\\ufb33":"Hebrew Letter Dalet With Dagesh","</script>":"Browser Challenge"}',
    output: '{"\\n":"Newline","\\r":"Carriage Return","1":"One","</script>":"Browser Challenge","\u0080":"Control\u007f","ö":"Latin Small Letter O With Diaeresis","€":"Euro Sign","😂":"Smiley","\ufb33":"Hebrew Letter Dalet With Dagesh"}',
  },
];

// RFC 8785 Appendix B number serialisation samples (IEEE 754 bit pattern -> text), same source.
const NUMBERS: [string, string][] = [
  ['0000000000000000', '0'], ['8000000000000000', '0'], ['0000000000000001', '5e-324'], ['8000000000000001', '-5e-324'],
  ['7fefffffffffffff', '1.7976931348623157e+308'], ['4340000000000000', '9007199254740992'], ['4430000000000000', '295147905179352830000'],
  ['44b52d02c7e14af5', '9.999999999999997e+22'], ['44b52d02c7e14af6', '1e+23'], ['444b1ae4d6e2ef50', '1e+21'],
  ['3eb0c6f7a0b5ed8c', '9.999999999999997e-7'], ['3eb0c6f7a0b5ed8d', '0.000001'], ['41b3de4355555553', '333333333.3333332'],
  ['becbf647612f3696', '-0.0000033333333333333333'], ['43143ff3c1cb0959', '1424953923781206.2'],
];

function fromBits(hex: string): number {
  const view = new DataView(new ArrayBuffer(8));
  view.setBigUint64(0, BigInt(`0x${hex}`));
  return view.getFloat64(0);
}

describe('canonicalJson (RFC 8785 JCS)', () => {
  it.each(VECTORS)('matches the published vector $name', ({ input, output }) => {
    expect(canonicalJson(JSON.parse(input))).toBe(output);
  });

  it.each(NUMBERS)('serialises the double with bits %s as %s', (bits, text) => {
    expect(canonicalJson(fromBits(bits))).toBe(text);
  });

  it('refuses NaN and Infinity (RFC 8785 §3.2.2.3: not representable)', () => {
    expect(() => canonicalJson({ a: [1, Number.NaN] })).toThrow(/non-finite number NaN at \.a\[1\]/);
    expect(() => canonicalJson(Number.POSITIVE_INFINITY)).toThrow(/non-finite/);
  });

  it('refuses lone surrogates (I-JSON, RFC 7493 §2.1) but keeps surrogate pairs', () => {
    expect(() => canonicalJson({ k: '\ud800x' })).toThrow(/lone surrogate/);
    expect(() => canonicalJson({ ['\udc00']: 1 })).toThrow(/lone surrogate/);
    expect(canonicalJson('\ud83d\ude02')).toBe('"😂"');
  });

  it('refuses values JSON has no form for', () => {
    expect(() => canonicalJson({ n: 1n })).toThrow(/bigint/);
    expect(() => canonicalJson({ d: new Date(0) })).toThrow(/plain object/);
  });

  it('omits undefined properties, as JSON.stringify does (a documented deviation)', () => {
    expect(canonicalJson({ b: 1, a: undefined })).toBe('{"b":1}');
    expect(canonicalJson(JSON.parse(JSON.stringify({ b: 1, a: undefined })))).toBe('{"b":1}');
  });
});
