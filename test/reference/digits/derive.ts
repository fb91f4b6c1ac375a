// Derives digits-contexts.csv from the UCI optdigits test set as shipped in the scikitjs npm tarball
// (package/docs/static/data/digits.csv). Usage:
//   node --import tsx test/reference/digits/derive.ts <path/to/digits.csv> [out.csv]
// The source file is only read. See PROVENANCE.md for what each output column means.
import { createHash } from 'node:crypto';
import { readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const PIXELS = 64;
const UPPER_PIXELS = 32; // rows 0..3 of the 8x8 grid come first in the source's row-major column order

interface Example {
  readonly id: number;
  readonly label: number;
  readonly ink: number;
  readonly upperInk: number;
}

function parseSource(text: string): Example[] {
  const lines = text.split(/\r?\n/).filter((line) => line.length > 0);
  const header = lines[0]?.split(',') ?? [];
  if (header.length !== PIXELS + 1 || header[PIXELS] !== 'target') {
    throw new Error(`expected 64 pixel columns then "target", got ${header.length} columns`);
  }
  return lines.slice(1).map((line, id) => {
    const values = line.split(',').map(Number);
    if (values.length !== PIXELS + 1 || values.some((v) => !Number.isFinite(v))) {
      throw new Error(`line ${id + 2}: expected 65 numbers`);
    }
    const pixels = values.slice(0, PIXELS);
    if (pixels.some((v) => !Number.isInteger(v) || v < 0 || v > 16)) {
      throw new Error(`line ${id + 2}: pixel counts must be integers in 0..16`);
    }
    const label = values[PIXELS] ?? Number.NaN;
    if (!Number.isInteger(label) || label < 0 || label > 9) throw new Error(`line ${id + 2}: label must be 0..9`);
    const ink = pixels.reduce((a, b) => a + b, 0);
    const upperInk = pixels.slice(0, UPPER_PIXELS).reduce((a, b) => a + b, 0);
    return { id, label, ink, upperInk };
  });
}

/** Value at rank ceil(q·n) of the sorted values (the inverse empirical CDF, type 1 quantile). */
function empiricalQuantile(sorted: readonly number[], q: number): number {
  const index = Math.max(0, Math.ceil(q * sorted.length) - 1);
  const value = sorted[index];
  if (value === undefined) throw new Error('empty sample');
  return value;
}

function derive(examples: readonly Example[]): { csv: string; cuts: string } {
  const inks = examples.map((e) => e.ink).sort((a, b) => a - b);
  const inkCut1 = empiricalQuantile(inks, 1 / 3);
  const inkCut2 = empiricalQuantile(inks, 2 / 3);
  const shares = examples.map((e) => e.upperInk / e.ink).sort((a, b) => a - b);
  const shareCut = empiricalQuantile(shares, 1 / 2);
  const rows = examples.map((e) => {
    const band = e.ink <= inkCut1 ? 'light' : e.ink <= inkCut2 ? 'medium' : 'heavy';
    const balance = e.upperInk / e.ink <= shareCut ? 'bottom' : 'top';
    return `${e.id},${e.label},${e.ink},${e.upperInk},${band}-${balance}`;
  });
  const cuts = `ink <= ${inkCut1} light, <= ${inkCut2} medium, else heavy; upper share <= ${shareCut} bottom, else top`;
  return { csv: ['id,label,ink,upper_ink,segment', ...rows].join('\n') + '\n', cuts };
}

const source = process.argv[2];
if (source === undefined) {
  console.error('usage: derive.ts <path/to/digits.csv> [out.csv]');
  process.exit(2);
}
const out = process.argv[3] ?? join(dirname(fileURLToPath(import.meta.url)), 'digits-contexts.csv');
const bytes = readFileSync(source);
const { csv, cuts } = derive(parseSource(bytes.toString('utf8')));
writeFileSync(out, csv);
console.log(`source sha256 ${createHash('sha256').update(bytes).digest('hex')}`);
console.log(`segments: ${cuts}`);
console.log(`wrote ${out}`);
