import { describe, expect, it } from 'vitest';
import { buildScan, createViewSql, formatFromName, globSql, quoteIdentifier, quoteLiteral, readsRelation, relationName } from '../../app/engine/sql-source.ts';
import { EngineError } from '../../app/engine/types.ts';

describe('quoting', () => {
  // SQL-92 §5.3 / §5.2: a quote inside a literal or delimited identifier is written twice.
  it.each([
    ["plain", "'plain'"],
    ["it's", "'it''s'"],
    ["''", "''''''"],
    ['C:\\logs\\a.csv', "'C:\\logs\\a.csv'"],
  ])('literal %s -> %s', (text, quoted) => expect(quoteLiteral(text)).toBe(quoted));
  it.each([
    ['src_1', '"src_1"'],
    ['say "hi"', '"say ""hi"""'],
  ])('identifier %s -> %s', (name, quoted) => expect(quoteIdentifier(name)).toBe(quoted));
});

describe('format from name', () => {
  it.each([
    ['a.parquet', 'parquet'], ['A.PARQUET', 'parquet'], ['dir/*.parquet', 'parquet'], ['a.csv', 'csv'], ['a.tsv', 'csv'],
    ['a.csv.gz', 'csv'], ['a.ndjson', 'ndjson'], ['a.jsonl', 'ndjson'], ['a.xlsx', undefined], ['a.json', undefined],
  ])('%s -> %s', (name, format) => expect(formatFromName(name)).toBe(format));
});

describe('buildScan', () => {
  it('one Parquet file, hive partitioning off', () => {
    expect(buildScan({ paths: ['/logs/d.parquet'] }).sql).toBe("read_parquet(['/logs/d.parquet'], hive_partitioning=false)");
  });
  it('a glob keeps its pattern', () => {
    expect(buildScan({ paths: ['/logs/2024-*.parquet'], hivePartitioning: true }).sql).toBe("read_parquet(['/logs/2024-*.parquet'], hive_partitioning=true)");
  });
  it('a folder of parts becomes <dir>/**/*.parquet with hive partitioning on', () => {
    const scan = buildScan({ paths: ['/logs/parts/'], folders: ['/logs/parts/'] });
    expect(scan.format).toBe('parquet');
    expect(scan.patterns).toEqual(['/logs/parts/**/*.parquet']);
    expect(scan.sql).toBe("read_parquet(['/logs/parts/**/*.parquet'], hive_partitioning=true)");
  });
  it('several files share one list; quotes in paths are doubled', () => {
    expect(buildScan({ paths: ["/l/it's.csv", '/l/b.csv'] }).sql).toBe("read_csv(['/l/it''s.csv', '/l/b.csv'], auto_detect=true)");
  });
  it('CSV leaves delimiter and header to the sniffer unless given', () => {
    expect(buildScan({ paths: ['a.csv.gz'] }).sql).toBe("read_csv(['a.csv.gz'], auto_detect=true)");
    expect(buildScan({ paths: ['a.csv'], csv: { delimiter: ';', header: false } }).sql).toBe("read_csv(['a.csv'], auto_detect=true, delim=';', header=false)");
  });
  it('TSV names the tab delimiter', () => {
    expect(buildScan({ paths: ['a.tsv'] }).sql).toBe("read_csv(['a.tsv'], auto_detect=true, delim='\t')");
  });
  it('NDJSON reads newline-delimited JSON', () => {
    expect(buildScan({ paths: ['a.jsonl'] }).sql).toBe("read_json(['a.jsonl'], format='newline_delimited')");
  });
  it('an explicit format wins over the extension', () => {
    expect(buildScan({ paths: ['export.txt'], format: 'csv' }).sql).toBe("read_csv(['export.txt'], auto_detect=true)");
  });
  it.each([
    [{ paths: [] }, 'io'],
    [{ paths: ['a.xlsx'] }, 'unsupported-format'],
    [{ paths: ['a.csv', 'b.parquet'] }, 'unsupported-format'],
  ])('rejects %j with %s', (request, code) => {
    expect(() => buildScan(request)).toThrow(EngineError);
    try { buildScan(request); } catch (e) { expect((e as EngineError).code).toBe(code); }
  });
});

describe('view and glob SQL', () => {
  it('creates or replaces a quoted view', () => {
    expect(createViewSql(relationName(3), "read_csv(['a.csv'], auto_detect=true)")).toBe(`CREATE OR REPLACE VIEW "src_3" AS SELECT * FROM read_csv(['a.csv'], auto_detect=true)`);
  });
  it('expands every pattern through glob()', () => {
    expect(globSql(['/a/*.csv', "/b/it's.csv"])).toBe("SELECT file FROM glob('/a/*.csv') UNION ALL SELECT file FROM glob('/b/it''s.csv')");
  });
});

describe('readsRelation', () => {
  it.each([
    ['SELECT * FROM "src_1"', true],
    ['select count(*) from src_1 where x > 0', true],
    ['SELECT * FROM "src_10"', false],
    ['SELECT 1 AS src_1x', false],
    ['SELECT 42', false],
  ])('%s -> %s', (sql, expected) => expect(readsRelation(sql, ['"src_1"'])).toBe(expected));
});

describe('scan counting of metadata statements', () => {
  it('does not count DESCRIBE, which reads the schema and not the rows', () => {
    expect(readsRelation('DESCRIBE SELECT * FROM "src_1"', ['"src_1"'])).toBe(false);
    expect(readsRelation('SELECT count(*) FROM "src_1"', ['"src_1"'])).toBe(true);
  });
});
