import { describe, expect, it } from 'vitest';
import { dispatch, INVOKE_CHANNELS, type IpcHandlers, IpcValidationError, isInvokeChannel, registerIpc, validateIpc } from '../../../app/main/ipc.ts';
import { admitRequest, parseHostReply, parseHostRequest } from '../../../app/main/host-messages.ts';
import { PathGrants } from '../../../app/main/file-access.ts';


describe('validateIpc', () => {
  it.each([['shell:open-external'], ['__proto__'], ['constructor'], [''], [42], [undefined]])('rejects the unknown channel %j', (channel) => {
    expect(() => validateIpc(channel, [])).toThrow(IpcValidationError);
    expect(() => validateIpc(channel, [])).toThrow(/Unknown IPC channel/);
  });

  it.each([
    ['launch:log', [1], /takes no arguments/],
    ['log:choose', ['/etc/passwd'], /takes no arguments/],
    ['reports:choose', ['/home/ana/.ssh/id_ed25519'], /takes no arguments/],
    ['recent:add', [], /takes one argument/],
    ['recent:add', ['/a.csv'], /expected array/],
    ['recent:add', [[]], /list of 1 to/],
    ['recent:add', [['/a.csv', 7]], /request 1 expected string/],
    ['recent:add', [['/a\0.csv']], /without NUL/],
    ['report:save', [{ format: 'exe', contents: 'x' }], /format must be "json" or "html"/],
    ['report:save', [{ format: 'pdf', contents: 'x' }], /format must be "json" or "html"/],
    ['report:save', [{ format: 'json', contents: 12 }], /contents expected string/],
    ['report:save', [{ format: 'json', contents: '{}', path: '/etc/cron.d/x' }], /Unrecognized key: "path"/],
    ['report:save', [null], /expected object/],
    ['report:print-pdf', [{ suggestedName: 'x'.repeat(300) }], /longer than 255/],
    ['report:print-pdf', [[]], /expected object/],
    ['engine:send', [{ kind: 'query', id: 1, sql: 'COPY (SELECT 1) TO \'/tmp/x\'' }], /kind/],
    ['engine:send', [{ kind: 'drop-tables', id: 1 }], /kind/],
    ['engine:send', [{ kind: 'pong', id: 1, protocol: 1 }], /kind/],
    ['engine:send', [{ kind: 'register', id: 1, source: { kind: 'file', files: [] } }], /source.kind/],
    ['engine:send', [{ kind: 'audit', id: 1, request: { relation: '"src_1"', input: { files: [], format: 'parquet' } } }], /request.source/],
    ['engine:send', [{ kind: 'audit', id: 1, request: { source: '"src_1"', roles: { action: 1 } } }], /request.roles.action/],
    ['engine:send', [{ kind: 'drill-page', id: 1, source: '"src_1"', roles: { time: null, decision_id: null, action: null }, selection: { segment: {}, where: 'TRUE' }, page: { offset: 0, limit: 10 } }], /where/],
    ['engine:send', [{ kind: 'audit-progress', id: 1, stage: 'cube' }], /kind/],
  ] as const)('rejects %s with malformed arguments %j', (channel, args, message) => {
    let thrown: unknown;
    try {
      validateIpc(channel, args);
    } catch (error) {
      thrown = error;
    }
    expect(thrown).toBeInstanceOf(IpcValidationError);
    expect((thrown as Error).message).toMatch(message);
    expect((thrown as Error).message.startsWith(channel)).toBe(true);
  });

  it.each([
    ['launch:log', []],
    ['log:choose', []],
    ['recent:list', []],
    ['recent:add', [['/data/maple-row.parquet']]],
    ['target-table:choose', []],
    ['reports:choose', []],
    ['report:save', [{ format: 'html', contents: '<html></html>', suggestedName: 'maple-row.html' }]],
    ['report:save', [{ format: 'json', contents: '{}' }]],
    ['report:print-pdf', [{}]],
    ['report:print-pdf', [{ suggestedName: 'audit' }]],
    ['engine:send', [{ kind: 'ping', id: 3 }]],
    ['engine:send', [{ kind: 'drill-count', id: 4, source: '"src_1"', roles: { time: null, decision_id: null, action: 'promotion' }, selection: { segment: { region: 'old-town' }, action: 'bakery' } }]],
    ['engine:send', [{ kind: 'register', id: 5, source: { kind: 'path', paths: ['/data/a.parquet'], format: 'parquet' } }]],
    ['engine:send', [{ kind: 'audit', id: 6, request: { source: '"src_1"', roles: { action: 'promotion', segments: ['region'] }, targets: [{ spec: 'uniform' }], settings: { 'segments.cap': 50 } } }]],
    ['engine:send', [{ kind: 'cancel', id: 7, target: 6 }]],
    ['engine:status', []],
  ] as const)('accepts %s %j unchanged', (channel, args) => {
    expect(validateIpc(channel, args)).toEqual({ channel, args });
  });

  it('knows every contract channel and only those', () => {
    for (const channel of INVOKE_CHANNELS) expect(isInvokeChannel(channel)).toBe(true);
    expect(isInvokeChannel('toString')).toBe(false);
  });
});

describe('registerIpc', () => {
  type Event = { url: string };
  const calls: unknown[] = [];
  const handlers: IpcHandlers<Event> = {
    'launch:log': () => ({ paths: ['/demo.parquet'], source: 'demo' }),
    'log:choose': () => null,
    'recent:list': () => [],
    'recent:add': (_e, paths) => {
      calls.push(paths);
      return [{ paths, openedAt: 't' }];
    },
    'target-table:choose': () => null,
    'reports:choose': () => null,
    'report:save': () => null,
    'report:print-pdf': () => null,
    'engine:send': (_e, message) => {
      calls.push(message);
    },
    'engine:status': () => ({ state: 'ready' }),
  };
  const registered = new Map<string, (event: Event, ...args: unknown[]) => unknown>();
  registerIpc<Event>({ handle: (channel, listener) => registered.set(channel, listener) }, handlers, (event) => event.url.startsWith('counterweight://app/'));
  const trusted = { url: 'counterweight://app/index.html' };

  it('registers exactly the contract channels', () => {
    expect([...registered.keys()].sort()).toEqual([...INVOKE_CHANNELS].sort());
  });

  it('validates before the handler runs, and passes valid arguments through', async () => {
    const handle = registered.get('recent:add');
    expect(() => handle?.(trusted, 'not a list')).toThrow(IpcValidationError);
    expect(calls).toEqual([]);
    expect(await handle?.(trusted, ['/a.csv'])).toEqual([{ paths: ['/a.csv'], openedAt: 't' }]);
    expect(calls).toEqual([['/a.csv']]);
  });

  it('refuses calls from a page that is not the app', () => {
    expect(() => registered.get('launch:log')?.({ url: 'https://example.org/' })).toThrow(/did not come from the app/);
  });

  it('dispatch calls the handler for the validated channel', async () => {
    expect(await dispatch(handlers, trusted, validateIpc('launch:log', []))).toEqual({ paths: ['/demo.parquet'], source: 'demo' });
  });
});

describe('engine messages', () => {
  it('admits register requests only for granted paths', () => {
    const grants = new PathGrants();
    grants.grant(['/data/a.parquet']);
    const ok = parseHostRequest({ kind: 'register', id: 1, source: { kind: 'path', paths: ['/data/a.parquet'] } });
    const foreign = parseHostRequest({ kind: 'register', id: 2, source: { kind: 'path', paths: ['/data/a.parquet', '/home/ana/.ssh/id_rsa'] } });
    expect(admitRequest(ok, grants)).toBe(ok);
    expect(() => admitRequest(foreign, grants)).toThrow(/id_rsa" was not opened/);
    expect(admitRequest(parseHostRequest({ kind: 'ping', id: 3 }), grants)).toEqual({ kind: 'ping', id: 3 });
  });

  it('relays only replies from the host', () => {
    expect(parseHostReply({ kind: 'pong', id: 1, protocol: 1 })).toEqual({ kind: 'pong', id: 1, protocol: 1 });
    expect(parseHostReply({ kind: 'audit-progress', id: 2, stage: 'tails', done: true })).toEqual({ kind: 'audit-progress', id: 2, stage: 'tails', done: true });
    expect(() => parseHostReply({ kind: 'audit', id: 3, request: { source: '"src_1"' } })).toThrow(/is a request/);
    expect(() => parseHostReply({ kind: 'query', id: 1, sql: 'select 1' })).toThrow(/kind/);
    expect(() => parseHostReply('pong')).toThrow(/expected object/);
  });
});
