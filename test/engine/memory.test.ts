/**
 * The native engine's memory limit, spill folder and peak-RSS figure (app/engine/memory.ts). Expected
 * limits are worked by hand from the rule in memory.ts (a quarter of physical memory, between 1 GiB and
 * 1.5 GiB); DuckDB reports a limit in MiB (current_setting('memory_limit'): 50MB = 47.6 MiB).
 */
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { defaultMemoryLimit, engineMemory, peakRssMb } from '../../app/engine/memory.ts';
import { createNativeEngine } from '../../app/engine/native.ts';

const GIB = 2 ** 30;
const dir = mkdtempSync(join(tmpdir(), 'cw-memory-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('the default memory limit follows the machine', () => {
  it.each([
    [2 * GIB, '1024MB'], // a quarter is 512 MiB: raised to the 1 GiB floor
    [5 * GIB, '1280MB'], // a quarter of 5 GiB
    [64 * GIB, '1536MB'], // a quarter is 16 GiB: held at 1.5 GiB
  ])('%d bytes -> %s', (total, limit) => {
    expect(defaultMemoryLimit(total)).toBe(limit);
  });

  it('flags come before the environment, which comes before the defaults; a bad size names itself', () => {
    const env = { COUNTERWEIGHT_MEMORY_LIMIT: '3GB', COUNTERWEIGHT_TEMP_DIR: '/spill/here' };
    expect(engineMemory({}, env)).toEqual({ memoryLimit: '3GB', tempDirectory: '/spill/here' });
    expect(engineMemory({ memoryLimit: '800MB', tempDirectory: '/mine' }, env)).toEqual({ memoryLimit: '800MB', tempDirectory: '/mine' });
    expect(engineMemory({}, {}).tempDirectory).toContain(`counterweight-spill-${process.pid}`);
    expect(() => engineMemory({}, { COUNTERWEIGHT_MEMORY_LIMIT: 'lots' })).toThrow(/COUNTERWEIGHT_MEMORY_LIMIT takes a size such as 2GB.*"lots"/);
  });
});

describe('a locked native engine spills beyond its limit to the folder it is given', () => {
  it('sorts more than its limit holds by spilling into that folder, and removes the folder on close', async () => {
    const spill = join(dir, 'spill');
    const engine = await createNativeEngine({ memoryLimit: '50MB', tempDirectory: spill, restrictFileAccess: true, threads: 1 });
    const settings = await engine.query("SELECT current_setting('memory_limit') AS m, current_setting('temp_directory') AS t");
    expect(settings.columns[0]?.[0]).toBe('47.6 MiB');
    expect(settings.columns[1]?.[0]).toBe(spill);
    let seen = false;
    const watch = setInterval(() => { if (existsSync(spill) && readdirSync(spill).length > 0) seen = true; }, 10);
    // 6·10^6 sorted 64-bit hashes (with the window's row layout) are several times 50 MB
    const t = await engine.query("SELECT count(*) AS n FROM (SELECT h, lag(h) OVER (ORDER BY h) AS prev FROM (SELECT hash('d-' || i::VARCHAR) AS h FROM range(6000000) t(i))) WHERE h = prev");
    clearInterval(watch);
    expect(Number(t.columns[0]?.[0])).toBe(0);
    expect(seen).toBe(true);
    await engine.close();
    expect(existsSync(spill)).toBe(false);
  }, 120_000);

  it('peak RSS is this process\'s, in MB', () => {
    const mb = peakRssMb();
    expect(mb).toBeGreaterThan(process.memoryUsage().heapUsed / 2 ** 20);
  });
});
