/**
 * Hosted web mode: the renderer served by the dev server, the native engine behind a token-protected
 * WebSocket (createHostedServer, as `npm run web -- --host` starts it). The page cannot learn a picked or
 * dropped File's path, so it sends the file's name and the server finds it in its log folders; the page
 * then checks the size the engine reports against the File's. One page walks the whole audit of the demo
 * Parquet log, and its numbers are compared with the headless command's JSON for the same inputs.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { newToken } from '../../scripts/web/access.ts';
import { createHostedServer, type HostedServer } from '../../scripts/web/hosted-server.ts';
import { parseTable } from '../../app/core/targets/targets.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import { formatShare, formatValue } from '../../renderer/format.ts';
import { heatCellText } from '../../app/charts/index.ts';

const ROOT = process.cwd();
const SAMPLE = path.join(ROOT, 'sample-data');
const DEMO_PARQUET = path.join(SAMPLE, 'maple-row-demo.parquet');
const V9_POLICY = path.join(SAMPLE, 'maple-row-v9-policy.csv');
import { expectDemoRoles, screen } from './app-steps.ts';
import { PAGE_ORIGIN } from './page-origin.ts';

interface Manifest {
  defects: { kind: string; segment: Record<string, string>; action?: string; rows_affected?: number; magnitude: Record<string, number> }[];
}
const manifest = JSON.parse(readFileSync(path.join(SAMPLE, 'maple-row-demo.manifest.json'), 'utf8')) as Manifest;
const defect = (kind: string) => {
  const d = manifest.defects.find((x) => x.kind === kind);
  if (!d) throw new Error(`the manifest plants no ${kind}`);
  return d;
};

interface ReportJson {
  verdict: string;
  checks: { id: string; status: string; findings: unknown[] }[];
  targets: { name: string; ess: number; ess_fraction: number; max_weight: number; khat: number | null; support_deficit: number; top1_weight_share: number | null;
    ips: { value: number }; snips: { value: number; se: number }; dr: { value: number } }[];
}

/** The headless command on the same inputs: exit status 2 means "not supported". */
function cliAudit(log: string, table: string, out: string): Promise<{ code: number | null; report: ReportJson }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['bin/counterweight.mjs', 'audit', log, '--target', `table:${table}`, '--json', out, '--quiet'], { cwd: ROOT, stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (d: Buffer) => (stderr += String(d)));
    child.on('error', reject);
    child.on('close', (code) => {
      try {
        resolve({ code, report: JSON.parse(readFileSync(out, 'utf8')) as ReportJson });
      } catch (error) {
        reject(new Error(`the headless audit wrote no report (exit ${code}): ${stderr}`, { cause: error }));
      }
    });
  });
}

/** All of (old-town, web, new)'s mass onto bakery, a promotion that segment never shows (manifest: always free-delivery). */
function editTable(text: string): string {
  const lines = text.trim().split('\n');
  const header = (lines[0] ?? '').split(',');
  const [r, d, t, a, p] = ['region', 'device', 'tenure', 'promotion', 'probability'].map((c) => header.indexOf(c)) as [number, number, number, number, number];
  return `${[lines[0], ...lines.slice(1).map((line) => {
    const f = line.split(',');
    if (f[r] === 'old-town' && f[d] === 'web' && f[t] === 'new') f[p] = f[a] === 'bakery' ? '1' : '0';
    return f.join(',');
  })].join('\n')}\n`;
}

/** Relative agreement for numbers computed by two runs of the same core over two native scans. */
function close(actual: number | null | undefined, expected: number | null | undefined, what: string): void {
  expect(typeof actual, what).toBe('number');
  expect(Math.abs((actual as number) - (expected as number)), what).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(expected as number)));
}

test.describe.serial('hosted web mode on the demo Parquet log', () => {
  let server: HostedServer;
  let token = '';
  let page: Page;
  let framesSent = 0;
  /** The `kind` of every message the page sent to the host, in order. */
  const kindsSent: string[] = [];
  let auditResultBytes = 0;
  let cli: { code: number | null; report: ReportJson };
  let cliEdited: { code: number | null; report: ReportJson };
  let tmp = '';

  test.beforeAll(async ({ browser }) => {
    tmp = mkdtempSync(path.join(os.tmpdir(), 'cw-hosted-'));
    const editedPath = path.join(tmp, 'maple-row-v9-policy.csv');
    writeFileSync(editedPath, editTable(readFileSync(V9_POLICY, 'utf8')));
    token = newToken();
    [cli, cliEdited, server] = await Promise.all([
      cliAudit(DEMO_PARQUET, V9_POLICY, path.join(tmp, 'cli.json')),
      cliAudit(DEMO_PARQUET, editedPath, path.join(tmp, 'cli-edited.json')),
      createHostedServer({ port: 0, token, origin: PAGE_ORIGIN, logFolders: [SAMPLE] }),
    ]);
    page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
    page.on('websocket', (ws) => {
      if (!ws.url().startsWith(server.socketUrl)) return;
      ws.on('framesent', (frame) => {
        framesSent++;
        try {
          kindsSent.push(String((JSON.parse(String(frame.payload)) as { kind?: unknown }).kind));
        } catch {
          kindsSent.push('(not JSON)');
        }
      });
      ws.on('framereceived', (frame) => {
        // The audit result is the one binary frame (app/engine/host/frames.ts): a JSON header, then the cube's bytes.
        if (typeof frame.payload !== 'string') auditResultBytes = frame.payload.byteLength;
      });
    });
  });

  test.afterAll(async () => {
    await page?.close();
    await server?.close();
  });

  test('the headless command finds the demo log not supported (exit status 2)', () => {
    expect(cli.code).toBe(2);
    expect(cli.report.verdict).toBe('not-supported');
    expect(cliEdited.code).toBe(2);
  });

  test('a Parquet log chosen with the file picker opens through the local engine with the demo roles suggested', async () => {
    await page.goto(`/#host=${encodeURIComponent(server.socketUrl)}&token=${token}`);
    await expect(page.getByText('Engine: native DuckDB on this computer')).toBeVisible();
    // Issue 18 #7: the token came in the fragment and is gone from the address bar (and so from the history).
    expect(page.url()).not.toContain(token);
    // What is left of the fragment is the screen's name only (the screen lives in the URL for back/forward).
    expect(await page.evaluate(() => window.location.href)).toMatch(new RegExp(`^${PAGE_ORIGIN.replace(/[.]/g, '\\.')}/(#/[a-z-]+)?$`));
    await screen(page, '20-hosted-open');
    await page.getByTestId('log-file-input').setInputFiles(DEMO_PARQUET);
    await expectDemoRoles(page, 30_000);
  });

  test('a file of the same name but another size is refused, not silently swapped', async () => {
    await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'Open a log' }).click();
    await page.getByTestId('log-file-input').setInputFiles({ name: 'maple-row-demo.parquet', mimeType: 'application/octet-stream', buffer: Buffer.from('not the demo log') });
    await expect(page.getByRole('alert')).toContainText('found a different maple-row-demo.parquet');
    await expect(page.getByRole('heading', { name: 'Open a decision log' })).toBeVisible();
  });

  test('the same log dropped on the page opens too, and the audit with the v9 table finds it not supported', async () => {
    test.setTimeout(90_000);
    const bytes = readFileSync(DEMO_PARQUET).toString('base64');
    const dataTransfer = await page.evaluateHandle(({ name, b64 }) => {
      const raw = atob(b64);
      const buffer = new Uint8Array(raw.length);
      for (let i = 0; i < raw.length; i++) buffer[i] = raw.charCodeAt(i);
      const dt = new DataTransfer();
      dt.items.add(new File([buffer], name, { type: 'application/vnd.apache.parquet' }));
      return dt;
    }, { name: 'maple-row-demo.parquet', b64: bytes });
    const zone = page.getByTestId('log-drop-zone');
    await zone.dispatchEvent('dragover', { dataTransfer });
    await zone.dispatchEvent('drop', { dataTransfer });
    await expectDemoRoles(page, 30_000);

    await page.getByRole('button', { name: 'Next: targets and thresholds' }).click();
    await page.locator('#target-table').setInputFiles(V9_POLICY);
    await expect(page.getByText('Policy table from maple-row-v9-policy.csv')).toBeVisible();
    const sentBefore = kindsSent.length;
    const started = Date.now();
    await page.getByRole('button', { name: 'Run the audit' }).click();
    await expect(page.getByRole('heading', { name: 'Audit overview' })).toBeVisible({ timeout: 60_000 });
    const elapsed = Date.now() - started;
    await expect(page.locator('.verdict-card [data-verdict="not-supported"]')).toBeVisible();
    // The host runs the whole audit: the page sends it one request, not the audit's queries one by one.
    expect(kindsSent.slice(sentBefore), 'messages the page sent to the host during the audit').toEqual(['audit']);
    expect(auditResultBytes, 'the audit result (report and cube) arrived as one binary frame').toBeGreaterThan(0);
    console.log(`hosted audit: ${elapsed} ms from Run to the overview; 1 request sent; audit-result frame ${auditResultBytes} bytes`);
    await screen(page, '21-hosted-overview');
  });

  test('every planted defect of the manifest shows in the overview, in the check that names it', async () => {
    // Each row's summary must carry the manifest's own evidence for the defect (sample-data/maple-row-demo.manifest.json).
    const exploration = defect('propensity.exploration');
    const range = defect('propensity.range');
    const evidence: Record<string, RegExp> = {
      'propensity.exploration': new RegExp(`${exploration.segment.region}.*${exploration.segment.device}`),
      'propensity.range': new RegExp(`^${(range.rows_affected ?? 0).toLocaleString('en')} rows`), // counts read with a thousands separator in the app
      'balance.weights': new RegExp(defect('balance.weights').segment.region ?? '-'),
      'drift.reward': new RegExp(`tenure=${defect('drift.reward').segment.tenure}`),
      'identity.duplicates': new RegExp(`^${(defect('identity.duplicates').magnitude.extra_rows ?? 0).toLocaleString('en')} duplicated`),
      'reward.validity': new RegExp(`^${((defect('reward.validity').magnitude.share_of_rows ?? 0) * 100).toFixed(2)}% of rewards missing`),
      'support.floor': new RegExp(`lowest ${defect('support.floor').magnitude.propensity}`),
    };
    expect(Object.keys(evidence).sort()).toEqual(manifest.defects.map((d) => d.kind).sort());
    for (const d of manifest.defects) {
      const row = page.locator(`tr[data-check="${d.kind}"]`);
      await expect(row.locator('td').nth(2), d.kind).toHaveText(evidence[d.kind] as RegExp);
      // A defect below its check's threshold (the 0.002 floor covers 0.04% of rows, under the 1% warning) still shows its finding.
      if (d.kind !== 'support.floor') await expect(row.locator('.badge > span:last-child'), d.kind).toHaveText(/^(Warn|Fail)$/);
    }
  });

  test('the segment map cell (old-town, web) shows that the logging policy did not explore there', async () => {
    const nav = page.getByRole('navigation', { name: 'Steps and results' });
    await nav.getByRole('button', { name: 'Segment map' }).click();
    await page.getByRole('button', { name: 'Show as table (keyboard)' }).click();
    await page.getByRole('button', { name: /^old-town · web · regular, free-delivery:/ }).click();
    const detail = page.getByRole('complementary', { name: 'Selected cell' });
    await expect(detail.getByRole('heading', { name: 'old-town · web · regular · free-delivery' })).toBeVisible();
    await expect(detail).toContainText(/no exploration in region=old-town, device=web.*every propensity is 1, always free-delivery/);
    await screen(page, '22-hosted-segment-cell', false);
  });

  test('regrouping and filtering the segment map is SQL over the cube in the page\'s DuckDB-Wasm, with nothing sent to the host', async () => {
    const map = page.locator('section[aria-labelledby="segments-title"]');
    await expect(map).toHaveAttribute('data-regroup-source', 'report');
    const sentBefore = framesSent;
    await page.getByTestId('group-by-region').uncheck();
    await page.getByTestId('group-by-tenure').uncheck();
    await expect(page.locator('.heat-table tbody tr th')).toHaveText(['android', 'ios', 'web']);
    await expect(map).toHaveAttribute('data-regroup-source', 'cube-sql');
    const queries = Number(await map.getAttribute('data-cube-queries'));
    expect(queries, 'SQL statements run over the cube table').toBeGreaterThanOrEqual(2);
    await page.getByTestId('segment-map-version').selectOption('v8');
    await expect.poll(async () => Number(await map.getAttribute('data-cube-queries'))).toBeGreaterThan(queries);
    await expect(map).toHaveAttribute('data-regroup-source', 'cube-sql');
    await expect(map).toHaveAttribute('aria-busy', 'false');
    // The exploration layer: each promotion's share of the v8 web decisions, counted by native DuckDB straight from the log.
    const engine = await createNativeEngine({ threads: 1 });
    try {
      const src = await engine.register({ kind: 'path', paths: [DEMO_PARQUET] });
      const t = await engine.query(`SELECT promotion, count(*)::DOUBLE AS n FROM ${src.relation} WHERE device = 'web' AND policy_version = 'v8' GROUP BY ALL`);
      const header = await page.locator('.heat-table thead th').allTextContents();
      const web = await page.locator('.heat-table tbody tr', { has: page.locator('th', { hasText: /^web$/ }) }).locator('td button').allTextContents();
      const shown = Object.fromEntries(header.slice(1).map((a, j) => [a, web[j]]));
      // the table view prints a cell as the chart does (app/charts/heatmap.ts heatCellText)
      const total = (t.columns[1] as number[]).reduce((a, b) => a + b, 0);
      for (let i = 0; i < t.rowCount; i++) expect(shown[String(t.columns[0]?.[i])], String(t.columns[0]?.[i])).toBe(heatCellText((t.columns[1]?.[i] as number) / total));
    } finally {
      await engine.close();
    }
    expect(framesSent, 'WebSocket frames sent to the host while regrouping').toBe(sentBefore);
    await page.getByTestId('segment-map-version').selectOption('');
    for (const c of ['region', 'tenure']) await page.getByTestId(`group-by-${c}`).check();
    await expect(map).toHaveAttribute('data-regroup-source', 'report');
  });

  test('the drift panel shows the reward change for lapsed customers', async () => {
    const d = defect('drift.reward');
    await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'Drift' }).click();
    const section = page.locator('section.check-section', { has: page.locator('#section-drift\\.reward') });
    await expect(section).toContainText('tenure=lapsed');
    await section.locator('summary').click();
    // The manifest's own before/after rates, to the three significant digits findings print.
    const before = Number((d.magnitude.ordered_rate_before ?? 0).toPrecision(3));
    const after = Number((d.magnitude.ordered_rate_after ?? 0).toPrecision(3));
    await expect(section.getByText(`in tenure=lapsed: mean reward relative to each action's own mean ${before} → ${after}`)).toBeVisible();
    await screen(page, '23-hosted-drift');
  });

  test('the exported JSON has the verdict, check statuses and target numbers of the headless command', async () => {
    await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'Sign-off' }).click();
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Export report JSON' }).click()]);
    const ui = JSON.parse(readFileSync(await download.path(), 'utf8')) as ReportJson & { run: { engine: string } };
    expect(ui.run.engine).toBe('host');
    expect(ui.verdict).toBe(cli.report.verdict);
    expect(ui.checks.map((c) => [c.id, c.status])).toEqual(cli.report.checks.map((c) => [c.id, c.status]));
    expect(ui.targets.map((t) => t.name)).toEqual(cli.report.targets.map((t) => t.name));
    for (const [i, t] of ui.targets.entries()) {
      const c = cli.report.targets[i] as ReportJson['targets'][number];
      for (const key of ['ess', 'ess_fraction', 'max_weight', 'khat', 'support_deficit', 'top1_weight_share'] as const) close(t[key], c[key], `${t.name} ${key}`);
      for (const key of ['ips', 'snips', 'dr'] as const) close(t[key].value, c[key].value, `${t.name} ${key}`);
    }
  });

  test('moving a segment\'s mass onto one action updates support, ESS and estimates within a second, with no request to the engine', async () => {
    await page.getByRole('navigation', { name: 'Steps and results' }).getByRole('button', { name: 'Edit a target' }).click();
    await expect(page.getByRole('heading', { name: 'Edit a target policy' })).toBeVisible();
    await page.getByLabel(/^Segment/).selectOption({ label: 'old-town · web · new' });
    const edited = (metric: string) => page.locator(`tr[data-metric="${metric}"] td.edited`);
    const sentBefore = framesSent;
    expect(sentBefore, 'the page talks to the host over the counted socket').toBeGreaterThan(0);
    const started = Date.now();
    await page.getByRole('button', { name: 'All on bakery' }).click();
    await expect(edited('ess')).not.toHaveAttribute('data-value', '', { timeout: 1000 });
    const elapsed = Date.now() - started;
    expect(elapsed).toBeLessThan(1000);
    await expect(page.getByTestId('edit-status')).toContainText('no query was sent to the engine');
    expect(framesSent, 'WebSocket frames sent to the host during the edit').toBe(sentBefore);

    // A fresh headless audit with the edited table gives the numbers shown, exactly and as displayed.
    const t = cliEdited.report.targets[0] as ReportJson['targets'][number];
    const shown = async (metric: string) => Number(await edited(metric).getAttribute('data-value'));
    close(await shown('support_deficit'), t.support_deficit, 'support deficit');
    close(await shown('ess'), t.ess, 'ESS');
    close(await shown('snips'), t.snips.value, 'SNIPS');
    close(await shown('ips'), t.ips.value, 'IPS');
    close(await shown('dr'), t.dr.value, 'DR');
    await expect(edited('support_deficit')).toHaveText(formatShare(t.support_deficit));
    await expect(edited('ess')).toHaveText(formatValue(t.ess));
    await expect(edited('snips')).toContainText(formatValue(t.snips.value));
    // The edit moved mass onto a cell the log never covers, so support got worse than in the audit.
    expect(t.support_deficit).toBeGreaterThan((cli.report.targets[0] as ReportJson['targets'][number]).support_deficit);
    await screen(page, '24-hosted-edit-target');
    console.log(`edit preview: ${elapsed} ms from click to numbers; frames sent before/after ${sentBefore}/${framesSent}`);
  });

  test('the edited table downloads as the table the headless command read, and can be queued for a new audit', async () => {
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Download the edited table' }).click()]);
    expect(download.suggestedFilename()).toBe('maple-row-v9-policy-edited.csv');
    const ctx = ['region', 'device', 'tenure', 'promotion'];
    const mine = parseTable('table:a.csv', 'a.csv', readFileSync(await download.path(), 'utf8'), 'promotion', ctx);
    const theirs = parseTable('table:b.csv', 'b.csv', readFileSync(path.join(tmp, 'maple-row-v9-policy.csv'), 'utf8'), 'promotion', ctx);
    const entries = (p: typeof mine) => (p.kind === 'table' ? [...p.probabilities].map(([k, m]) => [k, [...m].filter(([, q]) => q > 0)]) : []);
    expect(entries(mine)).toEqual(entries(theirs));

    await page.getByRole('button', { name: 'Audit with the edited table…' }).click();
    await expect(page.getByRole('heading', { name: 'Target policies and settings' })).toBeVisible();
    await expect(page.getByText('Policy table from maple-row-v9-policy-edited.csv')).toBeVisible();
  });
});
