/**
 * The merged state file of a parts folder (app/cli/merged-state.ts): every value read back exactly as written
 * (doubles compared with Object.is, so −0, NaN and ±∞ count; IEEE 754 binary64 holds each bit for bit), and a
 * damaged, cut-short or other-version file refused with a clear error rather than read as numbers.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { decodeMerged, encodeMerged, isJsonMerged, MERGED_FORMAT, MergedStateError, type MergedContent } from '../../../app/cli/merged-state.ts';
import { readMerged, type PartsState } from '../../../app/cli/parts.ts';
import { UsageError } from '../../../app/cli/errors.ts';
import { Entries, type CellKeys } from '../../../app/core/parts/replay.ts';
import type { Profile } from '../../../app/core/scan/profile.ts';

const dir = mkdtempSync(join(tmpdir(), 'cw-merged-state-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function content(): MergedContent {
  const entries = new Entries({ shift: 0.5, k1: 2 ** 100, k2: 2 ** 99 });
  const keys = (s: string, bucket: number): CellKeys => ({ segment: [s, 'ios'], action: 'bakery', version: 'v9', bucket });
  entries.addGroup(keys('north', 3), 0.25, 1, 7);
  entries.addGroup(keys('north', 3), 0.25, 0, 2);
  entries.addGroup(keys('south', -1), null, null, 4);
  entries.addGroup(keys('é "quoted"\n', 20_000), -0, 1, 1);
  return {
    parts: [{ name: 'day-1.parquet', sha256: 'ab'.repeat(32) }],
    profile: { rows: 14, columns: [] } as unknown as Profile,
    distincts: { segments: [['north', 'south'], ['ios']], p: [0.25, NaN, Infinity, -0] },
    weights: { segments: [['north', 'south'], ['ios', 'ios']], action: ['bakery', 'bakery'], p: [0.25, -Infinity], r: [1, null], rows: [9, 4] },
    copies: new Map([['id-1', 2], ['id-2', 3]]),
    cube: { width: 86_400_000_000, entries },
    rebuiltAt: [1],
  };
}

const same = (a: readonly (number | null)[], b: readonly (number | null)[]) => a.length === b.length && a.every((v, i) => Object.is(v, b[i]));

describe('the merged state file', () => {
  it('reads back every value as written', () => {
    const m = content();
    const back = decodeMerged(encodeMerged(m), 'merged-1.bin');
    expect(back.parts).toEqual(m.parts);
    expect(back.profile).toEqual(m.profile);
    expect(back.rebuiltAt).toEqual([1]);
    expect(back.distincts.segments).toEqual(m.distincts.segments);
    expect(same(back.distincts.p, m.distincts.p)).toBe(true);
    expect(back.weights.segments).toEqual(m.weights.segments);
    expect(back.weights.action).toEqual(m.weights.action);
    expect(same(back.weights.p, m.weights.p) && same(back.weights.r, m.weights.r) && same(back.weights.rows, m.weights.rows)).toBe(true);
    expect([...back.copies!]).toEqual([...m.copies!]);
    const a = m.cube!.entries;
    const b = back.cube!.entries;
    expect(back.cube!.width).toBe(m.cube!.width);
    expect(b.scales).toEqual(a.scales);
    expect(b.cells).toEqual(a.cells);
    expect(b.cell).toEqual(a.cell);
    expect(same(b.p, a.p) && same(b.c, a.c) && same(b.cr, a.cr)).toBe(true);
    for (let i = 0; i < 2 * a.length; i++) expect(b.sums.bigint(i)).toBe(a.sums.bigint(i));
  });

  it('refuses a flipped byte, a file cut short, another format version and no header, naming the file', () => {
    const bytes = encodeMerged(content());
    const flipped = bytes.slice();
    flipped[bytes.length - 3] = (flipped[bytes.length - 3] as number) ^ 1;
    expect(() => decodeMerged(flipped, 'merged-1.bin')).toThrow(/merged-1\.bin .*SHA-256/);
    expect(() => decodeMerged(bytes.subarray(0, bytes.length - 8), 'merged-1.bin')).toThrow(MergedStateError);
    const other = bytes.slice();
    new DataView(other.buffer).setUint32(8, MERGED_FORMAT + 1, true);
    expect(() => decodeMerged(other, 'merged-1.bin')).toThrow(new RegExp(`format version ${MERGED_FORMAT + 1}, this reads ${MERGED_FORMAT}`));
    expect(() => decodeMerged(new TextEncoder().encode('not a state'), 'merged-1.bin')).toThrow(/no merged state header/);
  });

  it('in a parts folder: a damaged file is a usage error, and a merged-N.json of an earlier tool is read as none (the parts are read)', () => {
    const state = { parts: [{ name: 'day-1.parquet', sha256: 'ab'.repeat(32) }], merged: 'merged-1.bin' } as unknown as PartsState;
    const bytes = encodeMerged(content());
    writeFileSync(join(dir, 'merged-1.bin'), bytes);
    expect(readMerged(dir, state)?.copies?.get('id-2')).toBe(3);
    writeFileSync(join(dir, 'merged-1.bin'), bytes.subarray(0, 100));
    expect(() => readMerged(dir, state)).toThrow(UsageError);
    writeFileSync(join(dir, 'merged-1.json'), JSON.stringify({ schema: 'counterweight.parts-merged/1' }));
    expect(isJsonMerged(readFileSync(join(dir, 'merged-1.json')))).toBe(true);
    expect(readMerged(dir, { ...state, merged: 'merged-1.json' } as PartsState)).toBeNull();
  });
});
