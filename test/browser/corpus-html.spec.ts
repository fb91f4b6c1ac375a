/**
 * HTML reports of the hostile corpus logs (test/corpus/files/hostile-*.csv, written by the command) in
 * Chromium: markup from log values and column names is shown as text and runs nothing.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { expect, test } from '@playwright/test';

const ROOT = path.resolve('.');
const FILES = path.join(ROOT, 'test/corpus/files');
let OUT = '';

const REPORTS: { name: string; args: string[] }[] = [
  { name: 'hostile-values', args: [path.join(FILES, 'hostile-values.csv')] },
  {
    name: 'hostile-names',
    args: [path.join(FILES, 'hostile-column-names.csv'), '--role', 'propensity=propensity', '--role', 'decision_id=id"; DROP TABLE src_1; --', '--segments', 'seg;ment,select,promo 🍞,<img src=x onerror=alert(1)>'],
  },
];

test.beforeAll(() => {
  OUT = mkdtempSync(path.join(tmpdir(), 'cw-corpus-html-'));
  for (const r of REPORTS) {
    const run = spawnSync(process.execPath, [path.join(ROOT, 'bin/counterweight.mjs'), 'audit', ...r.args, '--html', path.join(OUT, `${r.name}.html`), '--quiet'], { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
    if (run.status !== 0 && run.status !== 2) throw new Error(`audit of ${r.name} exited ${run.status}: ${run.stderr}`);
  }
});

test.afterAll(() => {
  if (OUT) rmSync(OUT, { recursive: true, force: true });
});

for (const r of REPORTS) {
  test(`${r.name}: no script from the log runs, no dialog opens, nothing is fetched`, async ({ page }) => {
    const file = path.join(OUT, `${r.name}.html`);
    const html = readFileSync(file, 'utf8');
    // The payloads never reach the markup unescaped.
    expect(html).not.toContain('<script>window.__cw_pwned');
    expect(html).not.toContain('<script>alert("promo")</script>');
    expect(html).not.toMatch(/<img src=x onerror/i);
    const dialogs: string[] = [];
    const requests: string[] = [];
    page.on('dialog', (d) => { dialogs.push(d.message()); void d.dismiss(); });
    page.on('request', (req) => { if (!req.url().startsWith('file:') && !req.url().startsWith('data:')) requests.push(req.url()); });
    await page.goto(pathToFileURL(file).href);
    await page.waitForLoadState('load');
    await page.waitForTimeout(300);
    expect(await page.evaluate(() => (window as unknown as { __cw_pwned?: unknown }).__cw_pwned)).toBeUndefined();
    expect(await page.locator('img[src="x"]').count()).toBe(0);
    expect(dialogs).toEqual([]);
    expect(requests).toEqual([]);
    const text = await page.locator('body').innerText();
    if (r.name === 'hostile-values') {
      // Shown to the reader as the text it is.
      expect(text).toContain('<script>window.__cw_pwned = 1</script>');
      expect(text).toContain('"; DROP TABLE src_1; --');
    } else {
      expect(text).toContain('<img src=x onerror=alert(1)>');
      expect(text).toContain('seg;ment');
    }
  });
}
