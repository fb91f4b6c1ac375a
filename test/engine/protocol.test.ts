import { describe, expect, it } from 'vitest';
import type { Table } from '../../app/core/table.ts';
import { decodeTable, encodeCell, encodeTable, parseHostMessage, ProtocolError } from '../../app/engine/host/protocol.ts';

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
