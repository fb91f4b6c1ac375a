import { mkdtempSync, mkdirSync, realpathSync, symlinkSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { findInFolders, isBareName, resolveLogPaths } from '../../../scripts/web/log-folders.ts';

describe('log folders for picked files in hosted mode', () => {
  const root = realpathSync(mkdtempSync(path.join(os.tmpdir(), 'cw-folders-')));
  const a = path.join(root, 'a');
  const b = path.join(root, 'b');
  mkdirSync(a);
  mkdirSync(b);
  writeFileSync(path.join(b, 'log.csv'), 'x\n1\n');
  writeFileSync(path.join(a, 'both.csv'), 'x\n1\n');
  writeFileSync(path.join(b, 'both.csv'), 'x\n2\n');
  mkdirSync(path.join(a, 'log.csv.d'));
  writeFileSync(path.join(root, 'secret.csv'), 'x\n42\n');
  symlinkSync(path.join(root, 'secret.csv'), path.join(a, 'link-out.csv'));
  symlinkSync(path.join(b, 'log.csv'), path.join(b, 'link-in.csv'));

  it('treats only a plain file name as a name to look up', () => {
    expect(['log.csv', 'part-0.parquet'].map(isBareName)).toEqual([true, true]);
    expect(['', '.', '..', 'a/log.csv', 'a\\log.csv', '/data/log.csv', '*.csv', 'log[1].csv'].map(isBareName)).toEqual([false, false, false, false, false, false, false, false]);
  });

  it('finds a name in the first folder that holds a file of that name', () => {
    expect(findInFolders('log.csv', [a, b])).toBe(path.join(b, 'log.csv'));
    expect(findInFolders('both.csv', [a, b])).toBe(path.join(a, 'both.csv'));
    expect(findInFolders('log.csv.d', [a, b])).toBeNull();
  });

  it('rewrites bare names to real paths, refuses every path, and says where it looked when a name is nowhere', () => {
    expect(resolveLogPaths({ kind: 'path', paths: ['log.csv', 'both.csv'], format: 'csv' }, [a, b])).toEqual({ kind: 'path', paths: [path.join(b, 'log.csv'), path.join(a, 'both.csv')], format: 'csv' });
    expect(() => resolveLogPaths({ kind: 'path', paths: ['log.csv', '/elsewhere/x.csv'] }, [a, b])).toThrow('"/elsewhere/x.csv" is not a plain file name');
    expect(() => resolveLogPaths({ kind: 'path', paths: [path.join(root, 'secret.csv')] }, [a, b])).toThrow('is not a plain file name');
    expect(() => resolveLogPaths({ kind: 'path', paths: ['missing.csv'] }, [a, b])).toThrow(`found no file named missing.csv in the folders it reads (${a}, ${b})`);
    expect(() => resolveLogPaths({ kind: 'path', paths: ['log.csv'] }, [])).toThrow('found no file named log.csv');
  });

  it('follows a link only to a file inside its folder', () => {
    expect(findInFolders('link-in.csv', [b])).toBe(path.join(b, 'log.csv'));
    expect(findInFolders('link-out.csv', [a])).toBeNull();
    expect(() => resolveLogPaths({ kind: 'path', paths: ['link-out.csv'] }, [a, b])).toThrow(`Refused: ${path.join(a, 'link-out.csv')} is a link to a file outside its folder`);
  });
});
