/**
 * The host protocol's messages (app/engine/host/messages.ts): the named request kinds and their replies
 * are accepted, anything else (a statement, a path where a handle belongs, a reply sent as a request) is
 * refused with the field that is wrong; the cell wire form keeps bigint, NaN and ±Infinity; a WebSocket
 * frame carries the cube as bytes.
 */
import { describe, expect, it } from 'vitest';
import type { Table } from '../../app/core/table.ts';
import { decodeReport, decodeTable, encodeCell, encodeReport, encodeTable } from '../../app/engine/host/codec.ts';
import { decodeFrame, encodeFrame } from '../../app/engine/host/frames.ts';
import { PROTOCOL_VERSION, REPLY_KINDS, REQUEST_KINDS, type HostMessage } from '../../app/engine/host/messages.ts';
import { ProtocolError } from '../../app/engine/host/protocol-error.ts';
import { parseHostReply } from '../../app/engine/host/replies.ts';
import { parseHostRequest } from '../../app/engine/host/requests.ts';

describe('wire encoding of tables', () => {
  const table: Table = {
    names: ['big', 'x', 'nested', 'text'],
    types: ['BIGINT', 'DOUBLE', 'STRUCT("a" BIGINT[], "$bigint" VARCHAR)', 'VARCHAR'],
    columns: [
      [9007199254740993n, -9007199254740993n, null],
      [NaN, Infinity, -Infinity],
      [{ a: [1n, 2n], $bigint: 'not a bigint' }, { a: [], $bigint: 'x' }, null],
      ['{"$num":"NaN"}', '', 'plain'],
    ],
    rowCount: 3,
  };

  it('survives JSON text exactly (bigint past 2^53, NaN, ±Infinity, look-alike fields)', () => {
    const wire = JSON.parse(JSON.stringify(encodeTable(table)));
    expect(decodeTable(wire)).toEqual(table);
    expect(Object.is(decodeTable(wire).columns[1]?.[0], NaN)).toBe(true);
  });

  it.each([
    [123n, { $bigint: '123' }],
    [NaN, { $num: 'NaN' }],
    [Infinity, { $num: 'Infinity' }],
    [-Infinity, { $num: '-Infinity' }],
    [1.5, 1.5],
    [null, null],
  ])('encodes %s as %j', (cell, wire) => expect(encodeCell(cell)).toEqual(wire));

  it('a rows reply with the encoded table validates', () => {
    const message = JSON.parse(JSON.stringify({ kind: 'rows', id: 7, table: encodeTable(table) }));
    expect(parseHostReply(message)).toEqual(message);
  });
});

const cell = { source: '"src_1"', roles: { time: 'logged_at', decision_id: 'decision_id', action: 'promotion' }, selection: { segment: { region: 'old-town' }, action: 'bakery' } };

describe('requests', () => {
  it('the request kinds are exactly the named ones, and none carries SQL', () => {
    expect([...REQUEST_KINDS].sort()).toEqual(['audit', 'cancel', 'close', 'drill-count', 'drill-page', 'ping', 'profile', 'register']);
    expect(PROTOCOL_VERSION).toBe(2);
  });

  it.each([
    [{ kind: 'ping', id: 1 }],
    [{ kind: 'register', id: 3, source: { kind: 'path', paths: ['/a.csv'], format: 'csv', csv: { delimiter: ';', header: true } } }],
    [{ kind: 'profile', id: 3, source: '"src_1"' }],
    [{ kind: 'audit', id: 4, request: { source: '"src_1"', roles: { action: 'promotion', time: null, segments: ['region'] }, targets: [{ spec: 'uniform' }, { spec: 'table:v9.csv', tableText: 'region,promotion,probability\n' }], settings: { 'segments.cap': 50, 'time.bucket': 'day', x: true } } }],
    [{ kind: 'drill-page', id: 5, ...cell, page: { offset: 0, limit: 200 } }],
    [{ kind: 'drill-page', id: 5, ...cell, page: { offset: 200, limit: 200, after: { key: ['2026-01-01T00:00:00.000000Z', { $bigint: '12' }], types: ['TIMESTAMP', 'BIGINT'], tied: 1 } } }],
    [{ kind: 'drill-count', id: 6, ...cell, selection: { segment: {}, finding: 3 } }],
    [{ kind: 'cancel', id: 7 }],
    [{ kind: 'cancel', id: 7, target: 4 }],
    [{ kind: 'close', id: 8 }],
  ])('accepts %j', (message) => expect(parseHostRequest(message)).toEqual(message));

  const audit = (request: Record<string, unknown>) => ({ kind: 'audit', id: 1, request: { source: '"src_1"', ...request } });
  it.each([
    [null, /"kind"|expected/],
    [{ kind: 'query', id: 2, sql: 'SELECT 1' }, /"kind"/],
    [{ kind: 'ping' }, /"id"/],
    [{ kind: 'ping', id: -1 }, /"id"/],
    [{ kind: 'ping', id: 1, sql: 'COPY x TO y' }, /sql/],
    [{ kind: 'register', id: 1, source: { kind: 'file', files: [] } }, /"source.kind"/],
    [{ kind: 'register', id: 1, source: { kind: 'path', paths: '/a.csv' } }, /"source.paths"/],
    [{ kind: 'register', id: 1, source: { kind: 'path', paths: [] } }, /"source.paths"/],
    [{ kind: 'register', id: 1, source: { kind: 'path', paths: ['/a\0.csv'] } }, /NUL/],
    [{ kind: 'register', id: 1, source: { kind: 'path', paths: ['/a.xlsx'], format: 'xlsx' } }, /"source.format"/],
    [{ kind: 'profile', id: 1, source: 'read_text(\'/etc/passwd\')' }, /must be a source the engine registered/],
    [audit({ source: 7 }), /"request.source"/],
    [audit({ source: '"src_1" UNION SELECT 1' }), /"request.source" must be a source the engine registered/],
    [audit({ relation: '"src_1"' }), /"request" .*relation/],
    [audit({ scanSql: "read_csv('/etc/passwd')" }), /scanSql/],
    [audit({ input: { files: [], format: 'csv' } }), /input/],
    [audit({ roles: { action: 3 } }), /"request.roles.action"/],
    [audit({ roles: { owner: 'x' } }), /owner/],
    [audit({ targets: { spec: 'uniform' } }), /"request.targets"/],
    [audit({ settings: { 'segments.cap': { n: 5 } } }), /"request.settings.segments.cap"/],
    [{ kind: 'drill-page', id: 1, ...cell, page: { offset: 0, limit: 5000 } }, /"page.limit"/],
    [{ kind: 'drill-page', id: 1, ...cell, selection: { segment: {}, where: '1=1) TO \'/tmp/x\' --' }, page: { offset: 0, limit: 10 } }, /where/],
    [{ kind: 'drill-count', id: 1, ...cell, selection: { segment: {}, finding: -1 } }, /"selection.finding"/],
    [{ kind: 'cancel', id: 2, target: -1 }, /"target"/],
  ])('refuses malformed request %#', (message, why) => {
    expect(() => parseHostRequest(message)).toThrow(ProtocolError);
    expect(() => parseHostRequest(message)).toThrow(why);
  });

  it.each(REPLY_KINDS.map((k) => [k]))('refuses the reply kind %s sent as a request', (kind) => {
    expect(() => parseHostRequest({ kind, id: 1 })).toThrow(`the host accepts requests only, not "${kind}"`);
  });
});

describe('replies', () => {
  const report = encodeReport({ schema: 'counterweight.report/1', verdict: 'not-supported', targets: [{ ess: NaN, max_weight: Infinity }] } as never);
  const cube = new Uint8Array([1, 2, 3, 4, 5]);

  it.each([
    [{ kind: 'pong', id: 1, protocol: 2 }],
    [{ kind: 'audit-progress', id: 1, stage: 'cube' }],
    [{ kind: 'audit-progress', id: 1, stage: 'checks', done: true }],
    [{ kind: 'count', id: 1, rows: 12 }],
    [{ kind: 'done', id: 1 }],
    [{ kind: 'error', id: 7, code: 'too-large', message: 'The result has more than 2,000,000 rows' }],
    [{ kind: 'registered', id: 8, source: { relation: '"src_1"', format: 'csv', files: ['/a.csv'], scanSql: 'read_csv(...)' }, inputs: [{ path: '/a.csv', bytes: 3, sha256: 'ab'.repeat(32), modified: '2026-01-01T00:00:00Z' }] }],
  ])('accepts %j', (message) => expect(parseHostReply(message)).toEqual(message));

  it('the report keeps NaN and Infinity and the cube stays bytes', () => {
    const message = parseHostReply(structuredClone({ kind: 'audit-result', id: 1, report, cube }));
    if (message.kind !== 'audit-result') throw new Error(message.kind);
    const back = decodeReport(message.report) as unknown as { targets: { ess: number; max_weight: number }[] };
    expect(Object.is(back.targets[0]?.ess, NaN)).toBe(true);
    expect(back.targets[0]?.max_weight).toBe(Infinity);
    expect([...message.cube]).toEqual([1, 2, 3, 4, 5]);
  });

  it.each([
    [{ kind: 'query', id: 1, sql: 'select 1' }, /"query"|"kind"/],
    [{ kind: 'audit', id: 3, request: { source: '"src_1"' } }, /is a request/],
    [{ kind: 'error', id: 1, code: 'oops', message: 'x' }, /"code"/],
    [{ kind: 'rows', id: 1, table: { names: ['a'], types: ['BIGINT'], columns: [[1n]], rowCount: 1 } }, /wire form/],
    [{ kind: 'rows', id: 1, table: { names: ['a'], types: ['INTEGER'], columns: [[1, 2]], rowCount: 1 } }, /rowCount/],
    [{ kind: 'audit-progress', id: 1, stage: 'scan' }, /"stage"/],
    [{ kind: 'audit-progress', id: 1, stage: 'cube', done: false }, /"done"/],
    [{ kind: 'audit-result', id: 1, report, cube: 'AQIDBAU=' }, /"cube" must be the bytes of the cube/],
    [{ kind: 'audit-result', id: 1, report: { $struct: { schema: 'other/2' } }, cube }, /"report" must be a report with schema/],
    [{ kind: 'audit-result', id: 1, report: { $struct: { schema: 'counterweight.report/1', x: { a: 1, b: 2 } } }, cube }, /"report"/],
  ])('refuses malformed reply %#', (message, why) => {
    expect(() => parseHostReply(message)).toThrow(ProtocolError);
    expect(() => parseHostReply(message)).toThrow(why);
  });
});

describe('WebSocket frames', () => {
  it('a message without bytes is JSON text; the audit result is one binary frame with the cube as it is', () => {
    expect(encodeFrame({ kind: 'ping', id: 1 })).toBe('{"kind":"ping","id":1}');
    const cube = new Uint8Array(1000).map((_, i) => i % 251);
    const message: HostMessage = { kind: 'audit-result', id: 3, report: { $struct: { schema: 'counterweight.report/1' } }, cube };
    const frame = encodeFrame(message);
    expect(frame).toBeInstanceOf(Uint8Array);
    const header = (frame as Uint8Array).byteLength - cube.byteLength;
    expect(header).toBeLessThan(120);
    const back = parseHostReply(decodeFrame(frame as Uint8Array));
    expect(back).toEqual(message);
  });

  it.each([
    [new Uint8Array([0, 0]), /short/],
    [new Uint8Array([0, 0, 0, 50, 123]), /runs past/],
    [new Uint8Array([0, 0, 0, 1, 123]), /not JSON/],
    [Uint8Array.from([0, 0, 0, 13, ...new TextEncoder().encode('{"a":{"$bytes":9}}').slice(0, 13)]), /not JSON/],
  ])('a malformed binary frame becomes a value the parser refuses %#', (frame, why) => {
    const decoded = decodeFrame(frame) as { malformed?: string };
    expect(decoded.malformed).toMatch(why);
    expect(() => parseHostReply(decoded)).toThrow(ProtocolError);
  });
});
