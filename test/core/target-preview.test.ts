/**
 * Editing a target over the cube must give what a fresh audit with the edited table gives: the preview
 * uses the same app/core functions on the cube cells the audit returned, with no new scan.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, expect, it } from 'vitest';
import { runAuditDetailed, type AuditResult } from '../../app/core/audit.ts';
import { previewTarget } from '../../app/core/targets/preview.ts';
import { parseTarget } from '../../app/core/targets/targets.ts';
import { createNativeEngine } from '../../app/engine/native.ts';
import type { Engine } from '../../app/engine/types.ts';
import { FIXED_NOW, SAMPLE, V9 } from './audit-helpers.ts';
import { expectRelativelyClose } from './expect-close.ts';

let engine: Engine;
let base: AuditResult;
let edited: AuditResult;
let editedText: string;
let scansBefore = 0;
let scansAfter = 0;

/** Moves the whole mass of (old-town, web, new) onto bakery, a cell the demo log never explores. */
function editTable(text: string): string {
  const lines = text.trim().split('\n');
  const header = lines[0]!.split(',');
  const [r, d, t, a, p] = ['region', 'device', 'tenure', 'promotion', 'probability'].map((c) => header.indexOf(c));
  return [lines[0], ...lines.slice(1).map((line) => {
    const f = line.split(',');
    if (f[r!] === 'old-town' && f[d!] === 'web' && f[t!] === 'new') f[p!] = f[a!] === 'bakery' ? '1' : '0';
    return f.join(',');
  })].join('\n');
}

beforeAll(async () => {
  engine = await createNativeEngine();
  const src = await engine.register({ kind: 'path', paths: [`${SAMPLE}maple-row-demo.parquet`] });
  const req = { relation: src.relation, input: { files: [], format: 'parquet' }, engine: 'native', now: FIXED_NOW };
  const text = readFileSync(V9, 'utf8');
  editedText = editTable(text);
  base = await runAuditDetailed((q) => engine.query(q), { ...req, targets: [{ spec: `table:${V9}`, tableText: text }] });
  scansBefore = engine.sourceScans;
  edited = await runAuditDetailed((q) => engine.query(q), { ...req, targets: [{ spec: `table:${V9}`, tableText: editedText }] });
  scansAfter = engine.sourceScans;
});
afterAll(async () => engine?.close());

it('previews the edited table from the first audit\'s cube with the numbers of a fresh audit', () => {
  const policy = parseTarget({ spec: `table:${V9}`, tableText: editedText }, { actionColumn: 'promotion', logColumns: ['region', 'device', 'tenure', 'promotion'], targetColumn: null });
  const before = engine.sourceScans;
  const p = previewTarget(base.cells, base.report.roles.segments, policy);
  expect(engine.sourceScans).toBe(before);
  const t = edited.report.targets[0]!;
  expectRelativelyClose({
    support_deficit: [p.supportDeficit, t.support_deficit], ess: [p.ess, t.ess], max_weight: [p.maxWeight, t.max_weight],
    ips: [p.ips.value, t.ips.value], snips: [p.snips.value, t.snips.value], snips_se: [p.snips.se, t.snips.se], dr: [p.dr.value, t.dr.value],
  }, 1e-12);
  expect(scansAfter).toBeGreaterThan(scansBefore);
});

it('the edit moves mass onto an unexplored cell, so support gets worse', () => {
  expect(edited.report.targets[0]!.support_deficit).toBeGreaterThan(base.report.targets[0]!.support_deficit);
});
