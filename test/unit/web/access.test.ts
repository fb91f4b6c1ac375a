import { describe, expect, it } from 'vitest';
import { checkUpgrade, hostedUrl, loopbackHosts, tokensEqual } from '../../../scripts/web/access.ts';
import { parseWebArgs, UsageError } from '../../../scripts/web/args.ts';

const token = 'ab'.repeat(32);
const policy = { token, origin: 'http://127.0.0.1:5178', hosts: loopbackHosts(5178) };
const good = { url: `/engine?token=${token}`, origin: 'http://127.0.0.1:5178', host: '127.0.0.1:5178' };

describe('checkUpgrade', () => {
  it('accepts the served origin with the token', () => {
    expect(checkUpgrade(good, policy)).toEqual({ ok: true });
    expect(checkUpgrade({ ...good, host: 'LOCALHOST:5178' }, policy)).toEqual({ ok: true });
  });

  it.each([
    ['no token', { url: '/engine' }, 401],
    ['an empty token', { url: '/engine?token=' }, 401],
    ['a wrong token', { url: `/engine?token=${'cd'.repeat(32)}` }, 401],
    ['a token prefix', { url: `/engine?token=${token.slice(0, 10)}` }, 401],
    ['another origin', { origin: 'https://example.org' }, 403],
    ['the same host on another port', { origin: 'http://127.0.0.1:5179' }, 403],
    ['no Origin header', { origin: undefined }, 403],
    ['a foreign Host header (DNS rebinding)', { host: 'attacker.example:5178' }, 403],
    ['no Host header', { host: undefined }, 403],
    ['another path', { url: `/admin?token=${token}` }, 404],
  ] as const)('refuses %s', (_what, change, status) => {
    const decision = checkUpgrade({ ...good, ...change }, policy);
    expect(decision.ok).toBe(false);
    if (!decision.ok) expect(decision.status).toBe(status);
  });

  it('compares tokens by value, not by length or prefix', () => {
    expect(tokensEqual(token, token)).toBe(true);
    expect(tokensEqual(token.slice(1), token)).toBe(false);
    expect(tokensEqual('', token)).toBe(false);
  });

  it('builds the page URL with the socket and token in the fragment, which no request carries', () => {
    const url = new URL(hostedUrl(5178, token));
    expect(url.origin).toBe('http://127.0.0.1:5178');
    expect(url.search).toBe('');
    const fragment = new URLSearchParams(url.hash.slice(1));
    expect(fragment.get('host')).toBe('ws://127.0.0.1:5178/engine');
    expect(fragment.get('token')).toBe(token);
  });
});

describe('parseWebArgs', () => {
  it.each([
    [[], { port: 5178, hosted: false, build: true }],
    [['--host'], { port: 5178, hosted: true, build: true }],
    [['--port', '8080', '--host'], { port: 8080, hosted: true, build: true }],
    [['--port=0', '--no-build'], { port: 0, hosted: false, build: false }],
  ])('parses %j', (argv, expected) => {
    expect(parseWebArgs(argv)).toEqual(expected);
  });

  it.each([
    [['--port'], /--port needs a whole number.*nothing/],
    [['--port', 'abc'], /"abc"/],
    [['--port', '70000'], /0 to 65535/],
    [['--port', '-1'], /"-1"/],
    [['--hots'], /Unknown option "--hots"/],
    [['sample.parquet'], /Unknown option/],
  ])('refuses %j with a usage message', (argv, message) => {
    expect(() => parseWebArgs(argv)).toThrow(UsageError);
    expect(() => parseWebArgs(argv)).toThrow(message);
  });
});
