/** Compares what an audit did (a report or an error) with a corpus case's expected outcome. */
import { createHash } from 'node:crypto';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { expect } from 'vitest';
import type { Report } from '../../app/core/model/report.ts';
import type { Outcome } from '../corpus/cases.ts';

export const FILES = path.resolve('test/corpus/files');

export type Attempt = { report: Report; error?: undefined } | { report?: undefined; error: Error & { code?: string } };

function textOf(report: Report, id: string): string {
  const check = report.checks.find((c) => c.id === id);
  expect(check, `check ${id} in the report`).toBeDefined();
  return [check?.summary ?? '', ...(check?.findings ?? []).map((f) => f.message)].join('\n');
}

export function expectOutcome(attempt: Attempt, outcome: Outcome): void {
  if ('error' in outcome) {
    expect(attempt.report, 'an error, not a report').toBeUndefined();
    const e = attempt.error as Error & { code?: string };
    if (outcome.error.code) expect(e.code).toBe(outcome.error.code);
    if (outcome.error.name) expect(e.name).toBe(outcome.error.name);
    for (const w of outcome.error.words) expect(e.message).toMatch(w);
    // one plain message, not DuckDB's dump of reader options or an SQL position marker
    expect(e.message).not.toMatch(/LINE \d+:|Possible (Solution|fixes)|sample_size =/);
    return;
  }
  if (attempt.error) throw attempt.error;
  const r = attempt.report;
  const a = outcome.audit;
  if (a.rows !== undefined) expect(r.input.rows).toBe(a.rows);
  if (a.verdict) expect(r.verdict).toBe(a.verdict);
  for (const [id, status] of Object.entries(a.checks ?? {})) expect(r.checks.find((c) => c.id === id)?.status, id).toBe(status);
  for (const [id, words] of Object.entries(a.words ?? {})) for (const w of words) expect(textOf(r, id)).toMatch(w);
  for (const [role, value] of Object.entries(a.roles ?? {})) expect((r.roles as unknown as Record<string, unknown>)[role], role).toEqual(value);
  for (const [role, w] of Object.entries(a.reasons ?? {})) expect(r.roles.reasons[role]).toMatch(w);
  if (a.maxTargets !== undefined) expect(r.targets.length).toBeLessThanOrEqual(a.maxTargets);
}

/** sha256 of every file under the corpus folder, by relative path: the inputs must never change. */
export function hashCorpus(dir = FILES): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (d: string): void => {
    for (const name of readdirSync(d).sort()) {
      const full = path.join(d, name);
      if (statSync(full).isDirectory()) walk(full);
      else out[path.relative(dir, full)] = createHash('sha256').update(readFileSync(full)).digest('hex');
    }
  };
  walk(dir);
  return out;
}
