/**
 * Writes the corpus of broken and hostile logs into test/corpus/files/ (committed; deterministic).
 * Run with `node --import tsx test/corpus/make-corpus.ts`. Scenario values follow the invented
 * "Maple Row Market" log (sample-data/README.md). The 10^6-distinct segment log is too large to commit; tests
 * write it into a temporary folder with writeHighCardinalitySegmentLog().
 */
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { gzipSync } from 'node:zlib';
import { DuckDBInstance } from '@duckdb/node-api';
import { mulberry32Unit } from '../../sample-data/prng.ts';

export const CORPUS_DIR = path.join(path.dirname(fileURLToPath(import.meta.url)), 'files');

const PROMOTIONS = ['produce-box', 'pantry-restock', 'bakery', 'free-delivery', 'recipe-kit', 'household', 'no-banner'];
const REGIONS = ['north-harbor', 'east-ridge', 'old-town', 'riverside', 'west-fields', 'south-bay'];
const HEADER = 'decision_id,logged_at,region,promotion,propensity,ordered';

/** mulberry32 (Tommy Ettinger, public domain) in [0, 1), shared with the demo generator. */
const mulberry32 = mulberry32Unit;

interface Row { id: string; at: string; region: string; promotion: string; p: string; ordered: string }

/** A well-formed uniform-logging log of `n` rows: every propensity is 1/7. */
function rows(n: number, seed = 7): Row[] {
  const rand = mulberry32(seed);
  const start = Date.parse('2026-03-02T00:00:00Z');
  return Array.from({ length: n }, (_, i) => ({
    id: `d-${String(i + 1).padStart(8, '0')}`,
    at: new Date(start + i * 60_000).toISOString().replace('T', ' ').slice(0, 19),
    region: REGIONS[Math.floor(rand() * REGIONS.length)] as string,
    promotion: PROMOTIONS[Math.floor(rand() * PROMOTIONS.length)] as string,
    p: (1 / 7).toFixed(7),
    ordered: rand() < 0.15 ? '1' : '0',
  }));
}

function csv(list: readonly Row[], edit: (r: Row, i: number) => Partial<Row> = () => ({})): string {
  const lines = list.map((r, i) => {
    const x = { ...r, ...edit(r, i) };
    return [x.id, x.at, x.region, x.promotion, x.p, x.ordered].join(',');
  });
  return `${HEADER}\n${lines.join('\n')}\n`;
}

async function withDuckDB(job: (run: (sql: string) => Promise<void>) => Promise<void>): Promise<void> {
  const instance = await DuckDBInstance.create(':memory:', { autoload_known_extensions: 'false', autoinstall_known_extensions: 'false', threads: '1' });
  const connection = await instance.connect();
  try {
    await job(async (sql) => { await connection.run(sql); });
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
}

const lit = (s: string) => `'${s.replaceAll("'", "''")}'`;

/** Writes a CSV of `rows` rows whose `shopper` segment column has `rows` distinct values (one per row). */
export async function writeHighCardinalitySegmentLog(file: string, n = 1_000_000): Promise<void> {
  await withDuckDB(async (run) => {
    await run(`COPY (
      SELECT 'd-' || lpad(CAST(i AS VARCHAR), 8, '0') AS decision_id,
             TIMESTAMP '2026-03-02 00:00:00' + to_seconds(CAST(i * 2 AS BIGINT)) AS logged_at,
             'shopper-' || CAST(i AS VARCHAR) AS shopper,
             ['produce-box', 'bakery', 'household'][1 + CAST(i % 3 AS INTEGER)] AS promotion,
             CAST(1 AS DOUBLE) / 3 AS propensity,
             CAST((i * 2654435761) % 7 = 0 AS INTEGER) AS ordered
      FROM range(${n}) t(i)) TO ${lit(file)} (FORMAT csv, HEADER true)`);
  });
}

export async function makeCorpus(dir = CORPUS_DIR): Promise<string[]> {
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  const written: string[] = [];
  const put = (name: string, data: string | Uint8Array) => {
    const file = path.join(dir, name);
    mkdirSync(path.dirname(file), { recursive: true });
    writeFileSync(file, data);
    written.push(name);
  };
  const base = rows(400);

  put('empty.csv', '');
  put('header-only.csv', `${HEADER}\n`);
  put('single-row.csv', csv(base.slice(0, 1)));
  put('ragged-rows.csv', csv(base.slice(0, 60)).split('\n').map((l, i) => (i === 17 ? `${l},extra,fields` : i === 33 ? l.split(',').slice(0, 3).join(',') : l)).join('\n'));
  put('unterminated-quote.csv', `${csv(base.slice(0, 40))}d-99999999,2026-03-03 00:00:00,"old-town,bakery,0.1428571,0\n`);
  // Latin-1 bytes for é (0xE9): not valid UTF-8.
  put('latin1.csv', Buffer.from(csv(base.slice(0, 50), (r, i) => (i % 5 === 0 ? { region: 'caf\u00e9-quarter' } : {})), 'latin1'));
  put('bom-utf8.csv', `\ufeff${csv(base.slice(0, 50))}`);
  put('nul-bytes.csv', csv(base.slice(0, 50), (_r, i) => (i === 10 ? { region: 'old\u0000town' } : {})));
  // European export: ';' between fields and ',' as the decimal mark.
  put('propensity-decimal-comma.csv', `${HEADER.replaceAll(',', ';')}\n${base.slice(0, 200).map((r) => [r.id, r.at, r.region, r.promotion, r.p.replace('.', ','), r.ordered].join(';')).join('\n')}\n`);
  put('propensity-text-comma.csv', csv(base.slice(0, 200), (r) => ({ p: `"${r.p.replace('.', ',')}"` })));
  const bad = ['NaN', 'inf', '-inf', '-0.2', '1.5', '0'];
  put('propensity-invalid.csv', csv(base, (_r, i) => (i < bad.length * 10 ? { p: bad[i % bad.length] as string } : {})));
  put('propensity-all-one.csv', csv(base, () => ({ p: '1', promotion: 'free-delivery' })));
  put('rewards-all-null.csv', csv(base, () => ({ ordered: '' })));
  put('time-mixed-formats.csv', csv(base.slice(0, 120), (r, i) => {
    const t = new Date(`${r.at.replace(' ', 'T')}Z`);
    if (i % 3 === 1) return { at: `${String(t.getUTCMonth() + 1).padStart(2, '0')}/${String(t.getUTCDate()).padStart(2, '0')}/${t.getUTCFullYear()} ${r.at.slice(11)}` };
    if (i % 3 === 2) return { at: String(t.getTime() / 1000) };
    return {};
  }));
  const epoch = (r: Row, scale: number) => String(Date.parse(`${r.at.replace(' ', 'T')}Z`) / 1000 * scale);
  put('epoch-seconds.csv', csv(base, (r) => ({ at: epoch(r, 1) })));
  put('epoch-millis.csv', csv(base, (r) => ({ at: epoch(r, 1000) })));
  put('actions-10k.csv', `promotion,propensity,ordered\n${Array.from({ length: 20_000 }, (_, i) => `sku-${i % 10_000},0.0001,${i % 9 === 0 ? 1 : 0}`).join('\n')}\n`);
  put('duplicate-columns.csv', `decision_id,promotion,propensity,ordered,promotion\n${base.slice(0, 100).map((r) => [r.id, r.promotion, r.p, r.ordered, 'bakery'].join(',')).join('\n')}\n`);
  const hostileNames = ['id"; DROP TABLE src_1; --', 'seg;ment', 'select', 'multi\nline', 'promo 🍞', '<img src=x onerror=alert(1)>', 'p', 'w'];
  const q = (s: string) => `"${s.replaceAll('"', '""')}"`;
  put('hostile-column-names.csv', `${hostileNames.map(q).join(',')},promotion,propensity,ordered\n${base.slice(0, 120).map((r, i) => [r.id, r.region, i % 2 ? 'from' : 'where', 'x', '🥖', '<b>bold</b>', '0.5', '2', r.promotion, r.p, r.ordered].map((v) => q(v)).join(',')).join('\n')}\n`);
  const hostileValues = ['<script>window.__cw_pwned = 1</script>', '"; DROP TABLE src_1; --', "'; DROP TABLE src_1; --", '<img src=x onerror="window.__cw_pwned=2">', '{{constructor.constructor("window.__cw_pwned=3")()}}'];
  // Hostile values dominate old-town × bakery-free rows, and one of them is never explored (p = 1).
  put('hostile-values.csv', `decision_id,logged_at,region,promotion,propensity,ordered\n${base.map((r, i) => {
    const region = hostileValues[i % hostileValues.length] as string;
    const greedy = i % hostileValues.length === 0;
    return [r.id, r.at, q(region), q(greedy ? '<script>alert("promo")</script>' : r.promotion), greedy ? '1' : r.p, r.ordered].join(',');
  }).join('\n')}\n`);
  const gz = gzipSync(Buffer.from(csv(rows(3000, 5))));
  put('truncated.csv.gz', gz.subarray(0, Math.floor(gz.length * 0.6)));
  put('not-gzip.csv.gz', csv(base.slice(0, 20)));
  put('png-named.csv', Buffer.from('89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c4890000000d4944415478da63f8cfc0f01f0005000201a5d8b0a10000000049454e44ae426082', 'hex'));
  put('csv-named.parquet', csv(base.slice(0, 30)));
  put('log.txt', csv(base.slice(0, 30)));
  put('good.ndjson', `${base.slice(0, 30).map((r) => JSON.stringify({ decision_id: r.id, logged_at: r.at, region: r.region, promotion: r.promotion, propensity: Number(r.p), ordered: Number(r.ordered) })).join('\n')}\n`);
  put('broken.ndjson', `${JSON.stringify({ decision_id: 'd-1', promotion: 'bakery', propensity: 0.5, ordered: 1 })}\n{"decision_id": "d-2", "promotion": "bak\n`);

  await withDuckDB(async (run) => {
    const full = path.join(dir, '.full.csv');
    writeFileSync(full, csv(base));
    mkdirSync(path.join(dir, 'mixed-schema'), { recursive: true });
    const parquet = (name: string, select: string) => run(`COPY (${select}) TO ${lit(path.join(dir, name))} (FORMAT parquet)`);
    await parquet('good.parquet', `SELECT * FROM read_csv(${lit(full)})`);
    await parquet('mixed-schema/part-1.parquet', `SELECT * FROM read_csv(${lit(full)}) LIMIT 200`);
    await parquet('mixed-schema/part-2.parquet', `SELECT decision_id, region, promotion AS action, CAST(propensity AS VARCHAR) AS propensity, ordered FROM read_csv(${lit(full)}) OFFSET 200`);
    rmSync(full);
  });
  written.push('good.parquet', 'mixed-schema/part-1.parquet', 'mixed-schema/part-2.parquet');
  const good = readFileSync(path.join(dir, 'good.parquet'));
  put('truncated.parquet', good.subarray(0, Math.floor(good.length / 2)));
  put('parquet-header-only.parquet', good.subarray(0, 4));
  return written;
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const written = await makeCorpus();
  process.stdout.write(`wrote ${written.length} files into ${CORPUS_DIR}\n`);
}
