import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import {
  chooseLog,
  chooseReports,
  chooseTargetTable,
  type DialogApi,
  MAX_HISTORY_REPORTS,
  mergeRecent,
  parseLaunchArgs,
  parseRecent,
  PathGrants,
  RECENT_LIMIT,
  recentStore,
  safeFileName,
  saveReport,
  TARGET_TABLE_MAX_BYTES,
  userArgs,
} from '../../../app/main/file-access.ts';

const cwd = path.resolve('/home/ana/logs');
const demoLog = path.resolve('/opt/counterweight/sample-data/maple-row-demo.parquet');

describe('parseLaunchArgs', () => {
  it('opens the demo log when no path is given', () => {
    expect(parseLaunchArgs([], { cwd, demoLog })).toEqual({ paths: [demoLog], source: 'demo' });
  });

  it('resolves positional paths against the working directory and skips switches', () => {
    const args = ['--inspect=9229', 'march.parquet', '--no-sandbox', '/data/april.csv'];
    expect(parseLaunchArgs(args, { cwd, demoLog })).toEqual({ paths: [path.join(cwd, 'march.parquet'), path.resolve('/data/april.csv')], source: 'argument' });
  });

  it('treats everything after -- as a path, even a leading dash', () => {
    expect(parseLaunchArgs(['--', '-odd-name.csv'], { cwd, demoLog }).paths).toEqual([path.join(cwd, '-odd-name.csv')]);
  });

  it('drops the Electron binary and, when unpackaged, the main script', () => {
    expect(userArgs(['/usr/bin/electron', 'dist/electron/main.cjs', 'a.parquet'], false)).toEqual(['a.parquet']);
    expect(userArgs(['/opt/Counterweight/counterweight', 'a.parquet'], true)).toEqual(['a.parquet']);
  });
});

describe('recent logs', () => {
  const at = (day: number): string => `2024-05-${String(day).padStart(2, '0')}T10:00:00.000Z`;

  it('puts the newest first and keeps one entry per path list', () => {
    let list = mergeRecent([], ['/a.parquet'], at(1));
    list = mergeRecent(list, ['/b.csv'], at(2));
    list = mergeRecent(list, ['/a.parquet'], at(3));
    expect(list).toEqual([
      { paths: ['/a.parquet'], openedAt: at(3) },
      { paths: ['/b.csv'], openedAt: at(2) },
    ]);
  });

  it(`caps the list at ${RECENT_LIMIT} entries, dropping the oldest`, () => {
    let list = mergeRecent([], ['/0.csv'], at(1));
    for (let i = 1; i <= RECENT_LIMIT + 2; i++) list = mergeRecent(list, [`/${i}.csv`], at(i + 1));
    expect(list).toHaveLength(RECENT_LIMIT);
    expect(list[0]?.paths).toEqual([`/${RECENT_LIMIT + 2}.csv`]);
    expect(list.some((r) => r.paths[0] === '/0.csv' || r.paths[0] === '/1.csv' || r.paths[0] === '/2.csv')).toBe(false);
  });

  it.each(['', 'not json', '{"paths":["/a"]}', '[{"paths":[],"openedAt":"x"}]', '[{"paths":[1],"openedAt":"x"}]', '[null]'])(
    'reads a corrupt or foreign file %j as an empty list',
    (text) => {
      expect(parseRecent(text)).toEqual([]);
    },
  );

  describe('recentStore', () => {
    let dir = '';
    afterEach(async () => {
      if (dir) await rm(dir, { recursive: true, force: true });
    });

    it('persists the merged list as JSON in the userData folder', async () => {
      dir = await mkdtemp(path.join(os.tmpdir(), 'cw-recent-'));
      const store = recentStore(dir);
      expect(await store.load()).toEqual([]);
      await store.add(['/x.parquet'], at(1));
      await store.add(['/y.parquet'], at(2));
      const onDisk = JSON.parse(await readFile(path.join(dir, 'recent-logs.json'), 'utf8')) as unknown;
      expect(onDisk).toEqual([
        { paths: ['/y.parquet'], openedAt: at(2) },
        { paths: ['/x.parquet'], openedAt: at(1) },
      ]);
      expect(await recentStore(dir).load()).toEqual(onDisk);
    });

    it('starts over when the stored file is corrupt', async () => {
      dir = await mkdtemp(path.join(os.tmpdir(), 'cw-recent-'));
      await writeFile(path.join(dir, 'recent-logs.json'), '{oops');
      expect(await recentStore(dir).add(['/z.csv'], at(5))).toEqual([{ paths: ['/z.csv'], openedAt: at(5) }]);
    });
  });
});

describe('PathGrants', () => {
  it('lets through only granted paths, comparing resolved forms', () => {
    const grants = new PathGrants();
    grants.grant(['/data/logs/../logs/a.parquet']);
    expect(grants.has('/data/logs/a.parquet')).toBe(true);
    expect(grants.has('/data/logs/b.parquet')).toBe(false);
    expect(() => grants.assertGranted(['/data/logs/a.parquet', '/etc/passwd'])).toThrow(/"\/etc\/passwd" was not opened/);
  });
});

function fakeDialog(open: { canceled: boolean; filePaths: string[] }, save: { canceled: boolean; filePath?: string } = { canceled: true }) {
  const calls: unknown[] = [];
  const dialog: DialogApi = {
    showOpenDialog: async (options) => {
      calls.push(options);
      return open;
    },
    showSaveDialog: async (options) => {
      calls.push(options);
      return save;
    },
  };
  return { dialog, calls };
}

describe('dialogs', () => {
  it('chooseLog returns the picked paths, or null when cancelled', async () => {
    expect(await chooseLog(fakeDialog({ canceled: false, filePaths: ['/a.parquet', '/b.parquet'] }).dialog)).toEqual(['/a.parquet', '/b.parquet']);
    expect(await chooseLog(fakeDialog({ canceled: true, filePaths: [] }).dialog)).toBeNull();
  });

  it('chooseTargetTable reads the chosen .csv or .json, and refuses other types and huge files', async () => {
    const read = async (p: string): Promise<string> => `text of ${p}`;
    const small = async (): Promise<number> => 120;
    expect(await chooseTargetTable(fakeDialog({ canceled: false, filePaths: ['/v9.csv'] }).dialog, read, small)).toEqual({ path: '/v9.csv', text: 'text of /v9.csv' });
    await expect(chooseTargetTable(fakeDialog({ canceled: false, filePaths: ['/v9.xlsx'] }).dialog, read, small)).rejects.toThrow(/\.csv or \.json/);
    await expect(chooseTargetTable(fakeDialog({ canceled: false, filePaths: ['/v9.json'] }).dialog, read, async () => TARGET_TABLE_MAX_BYTES + 1)).rejects.toThrow(/at most/);
    expect(await chooseTargetTable(fakeDialog({ canceled: true, filePaths: [] }).dialog, read, small)).toBeNull();
  });

  it('chooseReports reads every chosen .json report with its bare name, and refuses other types, huge files and too many files', async () => {
    const read = async (p: string): Promise<string> => `text of ${p}`;
    const small = async (): Promise<number> => 120;
    const { dialog, calls } = fakeDialog({ canceled: false, filePaths: ['/audits/week1.json', '/audits/week2.JSON'] });
    expect(await chooseReports(dialog, read, small)).toEqual([{ name: 'week1.json', text: 'text of /audits/week1.json' }, { name: 'week2.JSON', text: 'text of /audits/week2.JSON' }]);
    expect(calls).toEqual([expect.objectContaining({ properties: ['openFile', 'multiSelections'] })]);
    await expect(chooseReports(fakeDialog({ canceled: false, filePaths: ['/audits/week1.json', '/audits/log.parquet'] }).dialog, read, small)).rejects.toThrow(/"log\.parquet" is not/);
    await expect(chooseReports(fakeDialog({ canceled: false, filePaths: ['/audits/week1.json'] }).dialog, read, async () => 2 ** 40)).rejects.toThrow(/at most/);
    const many = Array.from({ length: MAX_HISTORY_REPORTS + 1 }, (_, i) => `/audits/w${i}.json`);
    await expect(chooseReports(fakeDialog({ canceled: false, filePaths: many }).dialog, read, small)).rejects.toThrow(/at most 200 reports/);
    expect(await chooseReports(fakeDialog({ canceled: true, filePaths: [] }).dialog, read, small)).toBeNull();
  });

  it('saveReport writes the contents to the chosen path with a safe default name', async () => {
    const written: [string, string | Uint8Array][] = [];
    const { dialog, calls } = fakeDialog({ canceled: true, filePaths: [] }, { canceled: false, filePath: '/out/report.html' });
    const saved = await saveReport(dialog, { format: 'html', contents: '<html>', suggestedName: '../../etc/maple row.html' }, new PathGrants(), async (p, c) => {
      written.push([p, c]);
    });
    expect(saved).toBe('/out/report.html');
    expect(written).toEqual([['/out/report.html', '<html>']]);
    expect(calls[0]).toMatchObject({ defaultPath: 'maple row.html' });
  });

  it('saveReport refuses to overwrite an opened log', async () => {
    const grants = new PathGrants();
    grants.grant(['/data/log.csv']);
    const { dialog } = fakeDialog({ canceled: true, filePaths: [] }, { canceled: false, filePath: '/data/log.csv' });
    await expect(saveReport(dialog, { format: 'json', contents: '{}' }, grants, async () => undefined)).rejects.toThrow(/cannot be saved over it/);
  });

  it.each([
    [undefined, 'json', 'counterweight-report.json'],
    ['audit.JSON', 'json', 'audit.json'],
    ['a/b\\c<d>.html', 'html', 'c_d_.html'],
    ['report', 'pdf', 'report.pdf'],
  ] as const)('safeFileName(%j, %s) is %s', (suggested, format, expected) => {
    expect(safeFileName(suggested, format)).toBe(expected);
  });
});
