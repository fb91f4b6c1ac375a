import { describe, expect, it } from 'vitest';
import type { Table } from '../../app/core/table.ts';
import { toBase64 } from '../../app/engine/host/base64.ts';
import { decodeCube, decodeReport, decodeTable, encodeCell, encodeReport, encodeTable, isRequest, parseHostMessage, ProtocolError } from '../../app/engine/host/protocol.ts';

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

  it('a result message with the encoded table validates', () => {
    const message = { kind: 'result', id: 7, table: encodeTable(table), sourceScans: 1 };
    expect(parseHostMessage(JSON.parse(JSON.stringify(message)))).toEqual(JSON.parse(JSON.stringify(message)));
  });
});

describe('parseHostMessage', () => {
  it.each([
    [{ kind: 'ping', id: 1 }],
    [{ kind: 'query', id: 2, sql: 'SELECT 1' }],
    [{ kind: 'register', id: 3, source: { kind: 'path', paths: ['/a.csv'], format: 'csv', csv: { delimiter: ';', header: true } } }],
    [{ kind: 'cancel', id: 4 }],
    [{ kind: 'close', id: 5 }],
    [{ kind: 'progress', id: 6, stage: 'scanning', rowsScanned: 1000 }],
    [{ kind: 'error', id: 7, code: 'io', message: 'Cannot read "a.csv"' }],
    [{ kind: 'registered', id: 8, source: { relation: '"src_1"', format: 'csv', files: ['/a.csv'], scanSql: 'read_csv(...)' } }],
  ])('accepts %j', (message) => expect(parseHostMessage(message)).toEqual(message));

  it.each([
    [null, /expected an object/],
    [[], /expected an object/],
    [{ kind: 'query', sql: 'SELECT 1' }, /"id"/],
    [{ kind: 'query', id: -1, sql: 'SELECT 1' }, /"id"/],
    [{ kind: 'query', id: 1 }, /"sql"/],
    [{ kind: 'drop-table', id: 1 }, /unknown kind "drop-table"/],
    [{ kind: 'register', id: 1, source: { kind: 'file', files: [] } }, /path source/],
    [{ kind: 'register', id: 1, source: { kind: 'path', paths: '/a.csv' } }, /list of strings/],
    [{ kind: 'register', id: 1, source: { kind: 'path', paths: ['/a.xlsx'], format: 'xlsx' } }, /"format"/],
    [{ kind: 'error', id: 1, code: 'oops', message: 'x' }, /"code"/],
    [{ kind: 'result', id: 1, sourceScans: 0, table: { names: ['a'], types: ['BIGINT'], columns: [[1n]], rowCount: 1 } }, /wire form/],
    [{ kind: 'result', id: 1, sourceScans: 0, table: { names: ['a'], types: ['DOUBLE'], columns: [[{ $num: 'nan' }]], rowCount: 1 } }, /wire form/],
    [{ kind: 'result', id: 1, sourceScans: 0, table: { names: ['a'], types: ['INTEGER'], columns: [[1, 2]], rowCount: 1 } }, /rowCount/],
  ])('rejects malformed message %#', (message, why) => {
    expect(() => parseHostMessage(message)).toThrow(ProtocolError);
    expect(() => parseHostMessage(message)).toThrow(why);
  });
});

describe('audit messages', () => {
  const request = {
    relation: '"src_1"',
    input: { files: [{ path: '/logs/maple-row-demo.parquet', bytes: 1234, sha256: 'ab'.repeat(32) }], format: 'parquet' },
    scanSql: "read_parquet('/logs/maple-row-demo.parquet')",
    roles: { action: 'promotion', propensity: 'propensity', time: null, segments: ['region', 'device'] },
    targets: [{ spec: 'uniform' }, { spec: 'table:v9.csv', tableText: 'region,promotion,probability\nold-town,bakery,1\n' }],
    settings: { 'segments.cap': 50, 'time.bucket': 'day' },
    engine: 'host',
  };
  const report = encodeReport({ schema: 'counterweight.report/1', verdict: 'not-supported', targets: [{ ess: NaN, max_weight: Infinity }] } as never);
  const cube = toBase64(new Uint8Array([1, 2, 3, 4, 5]));

  it.each([
    [{ kind: 'audit', id: 1, request }],
    [{ kind: 'audit', id: 2, request: { relation: '"src_1"', input: { files: [], format: 'csv' }, engine: 'host' } }],
    [{ kind: 'cancel', id: 3, target: 1 }],
    [{ kind: 'audit-progress', id: 1, stage: 'cube' }],
    [{ kind: 'audit-progress', id: 1, stage: 'checks', done: true }],
    [{ kind: 'audit-result', id: 1, report, cube }],
  ])('accepts %j', (message) => {
    const wire = JSON.parse(JSON.stringify(message));
    expect(parseHostMessage(wire)).toEqual(wire);
  });

  it('an audit request is a request, its progress and result are replies', () => {
    expect(isRequest(parseHostMessage({ kind: 'audit', id: 1, request }))).toBe(true);
    expect(isRequest(parseHostMessage({ kind: 'audit-result', id: 1, report, cube }))).toBe(false);
  });

  it('the report crosses JSON text exactly (NaN and Infinity kept), and the cube bytes too', () => {
    const message = parseHostMessage(JSON.parse(JSON.stringify({ kind: 'audit-result', id: 1, report, cube })));
    if (message.kind !== 'audit-result') throw new Error(message.kind);
    const back = decodeReport(message.report) as unknown as { targets: { ess: number; max_weight: number }[] };
    expect(Object.is(back.targets[0]?.ess, NaN)).toBe(true);
    expect(back.targets[0]?.max_weight).toBe(Infinity);
    expect([...decodeCube(message)]).toEqual([1, 2, 3, 4, 5]);
  });

  const withRequest = (patch: Record<string, unknown>) => ({ kind: 'audit', id: 1, request: { ...request, ...patch } });
  it.each([
    [{ kind: 'audit', id: 1 }, /"request" must be an object/],
    [withRequest({ relation: 7 }), /"request.relation" must be a relation name/],
    [withRequest({ relation: '' }), /"request.relation" must be a relation name/],
    [withRequest({ input: { files: 'a.csv', format: 'csv' } }), /"request.input.files" must be a list/],
    [withRequest({ input: { files: [{ path: 'a.csv', bytes: -1, sha256: '' }], format: 'csv' } }), /"request.input.files\[0\]".bytes must be a non-negative integer/],
    [withRequest({ input: { files: [], format: 'csv', sql: 'x' } }), /"request.input" has an unknown field "sql"/],
    [withRequest({ engine: undefined }), /"request.engine" must be a string/],
    [withRequest({ roles: { action: 3 } }), /"request.roles.action" must be a column name or null/],
    [withRequest({ roles: { owner: 'x' } }), /"request.roles" has an unknown field "owner"/],
    [withRequest({ roles: { segments: 'region' } }), /"request.roles.segments" must be a list of strings/],
    [withRequest({ targets: { spec: 'uniform' } }), /"request.targets" must be a list/],
    [withRequest({ targets: [{ tableText: 'x' }] }), /"request.targets\[0\]".spec must be a string/],
    [withRequest({ settings: { 'segments.cap': { n: 5 } } }), /"request.settings.segments.cap" must be a finite number/],
    [withRequest({ now: 5 }), /"request" has an unknown field "now"/],
    [{ kind: 'cancel', id: 2, target: -1 }, /"target" must be a non-negative integer/],
    [{ kind: 'audit-progress', id: 1, stage: 'scan' }, /"stage" must be one of profile, cube, tails, checks/],
    [{ kind: 'audit-progress', id: 1, stage: 'cube', done: false }, /"done" must be true/],
    [{ kind: 'audit-result', id: 1, report, cube: 'not base64!' }, /"cube" must be Arrow IPC bytes in base64/],
    [{ kind: 'audit-result', id: 1, report, cube: '' }, /"cube" must be Arrow IPC bytes in base64/],
    [{ kind: 'audit-result', id: 1, report: { verdict: 'pass' }, cube }, /"report" must be a report in the wire form/],
    [{ kind: 'audit-result', id: 1, report: { $struct: { schema: 'other/2' } }, cube }, /"report.schema" must be "counterweight.report\/1"/],
    [{ kind: 'audit-result', id: 1, report: { $struct: { schema: 'counterweight.report/1', x: { a: 1, b: 2 } } }, cube }, /a value of "report" is not in the wire form/],
  ])('rejects malformed audit message %#', (message, why) => {
    expect(() => parseHostMessage(message)).toThrow(ProtocolError);
    expect(() => parseHostMessage(message)).toThrow(why);
  });
});
