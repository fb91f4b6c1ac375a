import { mkdtempSync, mkdirSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { findInFolders, isBareName, resolveLogPaths } from '../../../scripts/web/log-folders.ts';

describe('log folders for picked files in hosted mode', () => {
  const root = mkdtempSync(path.join(os.tmpdir(), 'cw-folders-'));
  const a = path.join(root, 'a');
  const b = path.join(root, 'b');
  mkdirSync(a);
  mkdirSync(b);
  writeFileSync(path.join(b, 'log.csv'), 'x\n1\n');
  writeFileSync(path.join(a, 'both.csv'), 'x\n1\n');
  writeFileSync(path.join(b, 'both.csv'), 'x\n2\n');
  mkdirSync(path.join(a, 'log.csv.d'));

  it('treats only a plain file name as a name to look up', () => {
    expect(['log.csv', 'part-0.parquet'].map(isBareName)).toEqual([true, true]);
    expect(['', '.', '..', 'a/log.csv', 'a\\log.csv', '/data/log.csv'].map(isBareName)).toEqual([false, false, false, false, false, false]);
  });

  it('finds a name in the first folder that holds a file of that name', () => {
    expect(findInFolders('log.csv', [a, b])).toBe(path.join(b, 'log.csv'));
    expect(findInFolders('both.csv', [a, b])).toBe(path.join(a, 'both.csv'));
    expect(findInFolders('log.csv.d', [a, b])).toBeNull();
  });

  it('rewrites bare names, keeps paths, and says where it looked when a name is nowhere', () => {
    expect(resolveLogPaths({ kind: 'path', paths: ['log.csv', '/elsewhere/x.csv'], format: 'csv' }, [a, b])).toEqual({ kind: 'path', paths: [path.join(b, 'log.csv'), '/elsewhere/x.csv'], format: 'csv' });
    expect(() => resolveLogPaths({ kind: 'path', paths: ['missing.csv'] }, [a, b])).toThrow(`found no file named missing.csv in the folders it reads (${a}, ${b})`);
    expect(resolveLogPaths({ kind: 'path', paths: ['missing.csv'] }, [])).toEqual({ kind: 'path', paths: ['missing.csv'] });
  });
});
