/**
 * The engine host as a child process, spoken to only through its named requests: register (with the
 * files' fingerprints), profile, audit, drill-page and drill-count, ping, cancel, close. Expected values
 * come from the same builders run on an in-process native engine, and from node:crypto for the digests.
 */
import { createHash } from 'node:crypto';
import { readFileSync, statSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runAuditDetailed } from '../../app/core/audit.ts';
import { cursorAfter, drillCountSql, drillOrderColumns, drillPageSql, parseDrillCount, type DrillSpec } from '../../app/core/scan/drill.ts';
import { profileLog } from '../../app/core/scan/profile.ts';
import { rowObjects } from '../../app/core/table.ts';
import { findingsWithRows } from '../../app/engine/host/codec.ts';
import type { HostEngine, HostRegistration } from '../../app/engine/host/client.ts';
import { PROTOCOL_VERSION } from '../../app/engine/host/messages.ts';
import { spawnHostChild } from '../../app/engine/host/spawn.ts';
import { createNativeEngine, type NativeEngine } from '../../app/engine/native.ts';
import { FIXED_NOW, SAMPLE } from '../core/audit-helpers.ts';

const DEMO = `${SAMPLE}maple-row-demo.parquet`;
const roles = { time: 'logged_at', decision_id: 'decision_id', action: 'promotion' };

let host: HostEngine;
let local: NativeEngine;
let registration: HostRegistration;
let localRelation = '';

beforeAll(async () => {
  host = spawnHostChild();
  await host.connect();
  registration = await host.register({ kind: 'path', paths: [DEMO] });
  local = await createNativeEngine({ threads: 1 });
  localRelation = (await local.register({ kind: 'path', paths: [DEMO] })).relation;
});
afterAll(async () => {
  await host?.close();
  await local?.close();
});

const spec = (selection: DrillSpec['selection'], columnTypes: Record<string, string>): DrillSpec => ({ relation: localRelation, roles, selection, columnTypes });

describe('engine host (child process): named requests only', () => {
  it('speaks the protocol version this build speaks', async () => {
    expect(await host.ping()).toBe(PROTOCOL_VERSION);
  });

  it('register answers with the files and their size, time and SHA-256 (node:crypto over the file)', () => {
    expect(registration.source.files).toEqual([DEMO]);
    const bytes = readFileSync(DEMO);
    expect(registration.inputs).toEqual([{
      path: DEMO,
      bytes: statSync(DEMO).size,
      sha256: createHash('sha256').update(bytes).digest('hex'),
      modified: new Date(Math.floor(statSync(DEMO).mtimeMs / 1000) * 1000).toISOString().replace('.000Z', 'Z'),
    }]);
  });

  it('profile answers what profileLog answers in-process', async () => {
    expect(await host.profile(registration.source.relation)).toEqual(await profileLog((q) => local.query(q), localRelation));
  });

  it('drill-page and drill-count read the rows the builders read in-process, page after page', async () => {
    const profile = await host.profile(registration.source.relation);
    const types = Object.fromEntries(profile.columns.map((c) => [c.name, c.type]));
    const selection = { segment: { region: 'old-town', device: 'web' }, action: 'free-delivery' };
    const drill = { source: registration.source.relation, roles, selection };
    expect(await host.drillCount(drill)).toBe(parseDrillCount(await local.query(drillCountSql(spec(selection, types)))));
    const first = await host.drillPage(drill, { offset: 0, limit: 50 });
    expect(rowObjects(first)).toEqual(rowObjects(await local.query(drillPageSql(spec(selection, types), { offset: 0, limit: 50 }))));
    const after = cursorAfter(drillOrderColumns(spec(selection, types)), first, null, 0);
    const second = await host.drillPage(drill, { offset: 50, limit: 50, after });
    expect(rowObjects(second)).toEqual(rowObjects(await local.query(drillPageSql(spec(selection, types), { offset: 50, limit: 50, after }))));
  });

  it('a finding is drilled by its number in the host\'s latest audit, never by its predicate', async () => {
    const { report } = await host.audit({ source: registration.source.relation });
    const predicates = findingsWithRows(report, registration.source.relation);
    expect(predicates.length).toBeGreaterThan(0);
    const reference = await runAuditDetailed((q) => local.query(q), { relation: localRelation, input: { files: [], format: 'parquet' }, engine: 'native', now: FIXED_NOW });
    const where = findingsWithRows(reference.report, localRelation)[0] as string;
    const types = Object.fromEntries(reference.profile.columns.map((c) => [c.name, c.type]));
    const count = await host.drillCount({ source: registration.source.relation, roles, selection: { segment: {}, finding: 0 } });
    expect(count).toBe(parseDrillCount(await local.query(drillCountSql(spec({ segment: {}, where }, types)))));
    await expect(host.drillCount({ source: registration.source.relation, roles, selection: { segment: {}, finding: predicates.length } }))
      .rejects.toThrow(/no finding number \d+ with rows; run the audit again/);
  });

  it('a page larger than the protocol allows is refused before it reaches the engine', async () => {
    await expect(host.drillPage({ source: registration.source.relation, roles, selection: { segment: {} } }, { offset: 0, limit: 100_000 }))
      .rejects.toThrow(/"page.limit" .*1000/);
  });
});
