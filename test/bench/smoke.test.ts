/**
 * The benchmark harness end to end at 1M rows (`npm run bench -- --smoke`): it generates or reuses the
 * cached log, measures every engine in its own child process, and every engine's audit of the same
 * log reports the same rows, verdict and ESS (the baseline computes ESS its own way, row by row).
 * No timing is asserted: this machine's load is not ours to control.
 */
import { readFile } from 'node:fs/promises';
import { expect, it } from 'vitest';
import { bench, parseOptions, type Row } from '../../bench/run.ts';

it('the smoke benchmark measures native, host, Wasm (CSV and Parquet) and the baseline, and they agree', async () => {
  const lines: string[] = [];
  const options = { ...parseOptions(['--smoke']), log: (line: string) => lines.push(line) };
  const { rows, file } = await bench(options);
  const failed = rows.filter((r) => r.error);
  expect(failed.map((r) => `${r.engine}/${r.format}/${r.kind}: ${r.error}`)).toEqual([]);
  const audits = rows.filter((r) => r.kind === 'audit');
  expect(audits.map((r) => `${r.engine}/${r.format}`).sort()).toEqual(['baseline/arrow', 'host/parquet', 'native/csv', 'native/parquet', 'wasm/csv', 'wasm/parquet']);
  for (const r of rows) {
    expect(r.seconds).toBeGreaterThan(0);
    expect(r.peakRssMb).toBeGreaterThan(10);
  }
  const native = audits.find((r) => r.engine === 'native' && r.format === 'parquet') as Row;
  // 1M decisions plus round(0.3%) retried copies (sample-data/README.md)
  expect(native.answer.rows).toBe(1_003_000);
  for (const r of audits) {
    expect(r.answer.rows).toBe(1_003_000);
    if (r.engine !== 'baseline') expect(r.answer.verdict).toBe(native.answer.verdict);
    expect(Math.abs(Number(r.answer.ess) - Number(native.answer.ess))).toBeLessThan(1e-9 * Number(native.answer.ess));
  }
  const written = JSON.parse(await readFile(file, 'utf8')) as { machine: { nproc: number }; results: Row[] };
  expect(written.machine.nproc).toBeGreaterThan(0);
  expect(written.results).toHaveLength(rows.length);
  expect(lines.join('\n')).toContain('audit/cube');
}, 240_000);
