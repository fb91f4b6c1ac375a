/** Writes the fixture logs of cases.ts in every format, with native DuckDB (COPY ... TO). */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import type { SourceSpec } from '../../app/engine/types.ts';
import { quoteLiteral } from '../../app/engine/sql-source.ts';
import { FIXTURE_SELECT } from './cases.ts';

export type FixtureName = 'parquet' | 'parquet-hive-folder' | 'csv' | 'tsv' | 'csv.gz' | 'ndjson';

export interface Fixtures {
  dir: string;
  paths: Record<FixtureName, string>;
  spec(name: FixtureName): SourceSpec & { kind: 'path' };
  /** The SourceFormat an engine needs to read the fixture. */
  formatOf(name: FixtureName): 'parquet' | 'csv' | 'ndjson';
  remove(): void;
}

export const FIXTURE_NAMES: FixtureName[] = ['parquet', 'parquet-hive-folder', 'csv', 'tsv', 'csv.gz', 'ndjson'];

export async function writeFixtures(): Promise<Fixtures> {
  const dir = mkdtempSync(join(tmpdir(), 'cw-engine-'));
  const paths: Record<FixtureName, string> = {
    parquet: join(dir, 'log.parquet'),
    'parquet-hive-folder': join(dir, 'parts'),
    csv: join(dir, 'log.csv'),
    tsv: join(dir, 'log.tsv'),
    'csv.gz': join(dir, 'log.csv.gz'),
    ndjson: join(dir, 'log.ndjson'),
  };
  const instance = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false' });
  const c = await instance.connect();
  const q = quoteLiteral;
  await c.run(`COPY (${FIXTURE_SELECT}) TO ${q(paths.parquet)} (FORMAT parquet)`);
  await c.run(`COPY (${FIXTURE_SELECT}) TO ${q(paths['parquet-hive-folder'])} (FORMAT parquet, PARTITION_BY (region))`);
  await c.run(`COPY (${FIXTURE_SELECT}) TO ${q(paths.csv)} (FORMAT csv, HEADER true)`);
  await c.run(`COPY (${FIXTURE_SELECT}) TO ${q(paths.tsv)} (FORMAT csv, HEADER true, DELIMITER '\t')`);
  await c.run(`COPY (${FIXTURE_SELECT}) TO ${q(paths['csv.gz'])} (FORMAT csv, HEADER true, COMPRESSION gzip)`);
  await c.run(`COPY (${FIXTURE_SELECT}) TO ${q(paths.ndjson)} (FORMAT json)`);
  c.closeSync();
  instance.closeSync();
  return {
    dir,
    paths,
    spec: (name) => ({ kind: 'path', paths: [paths[name]] }),
    formatOf: (name) => (name.startsWith('parquet') ? 'parquet' : name === 'ndjson' ? 'ndjson' : 'csv'),
    remove: () => rmSync(dir, { recursive: true, force: true }),
  };
}
