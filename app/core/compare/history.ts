/**
 * A folder of reports read as a history (`counterweight history`): the verdict, each check's status and the key
 * metrics of every target and segment over time, and where each finding was first and last seen. Reports are
 * ordered by the start of their log (then by when they were audited). Contract "counterweight.history/1".
 */
import { z } from 'zod';
import { SegmentSchema, VerdictSchema, type Report } from '../model/report.ts';
import { logSpan, segmentKey } from './match.ts';

export const HISTORY_SCHEMA_ID = 'counterweight.history/1';

const list = <T extends z.ZodType>(item: T) => z.array(item).readonly();
const nullableNumber = z.union([z.number(), z.null()]);

export const HistorySchema = z.strictObject({
  schema: z.literal(HISTORY_SCHEMA_ID),
  entries: list(z.strictObject({
    label: z.string(),
    started_at: z.string(),
    span: z.union([z.strictObject({ from: z.string(), to: z.string() }), z.null()]),
    rows: z.number().int().min(0),
    verdict: VerdictSchema,
  })),
  checks: list(z.strictObject({ id: z.string(), title: z.string(), statuses: list(z.union([z.string(), z.null()])) })),
  targets: list(z.strictObject({
    name: z.string(),
    ess: list(nullableNumber),
    ess_fraction: list(nullableNumber),
    khat: list(nullableNumber),
    support_deficit: list(nullableNumber),
    snips: list(nullableNumber),
    snips_ci_low: list(nullableNumber),
    snips_ci_high: list(nullableNumber),
  })),
  segments: list(z.strictObject({ segment: SegmentSchema, statuses: list(z.union([z.string(), z.null()])), rows: list(nullableNumber) })),
  findings: list(z.strictObject({
    check: z.string(),
    segment: SegmentSchema,
    action: z.string().optional(),
    target: z.string().optional(),
    scope: z.string().optional(),
    /** Index into entries of the first and last report holding it; `seen` per entry. */
    first: z.number().int().min(0),
    last: z.number().int().min(0),
    seen: list(z.union([z.string(), z.null()])),
    message: z.string(),
  })),
}).readonly();
export type History = z.infer<typeof HistorySchema>;

export interface LabelledReport {
  readonly label: string;
  readonly report: Report;
}

type TargetSeries = 'ess' | 'ess_fraction' | 'khat' | 'support_deficit' | 'snips' | 'snips_ci_low' | 'snips_ci_high';

const num = (x: number | null | undefined): number | null => (typeof x === 'number' && Number.isFinite(x) ? x : null);

function orderForHistory(reports: readonly LabelledReport[]): LabelledReport[] {
  const start = (r: Report) => logSpan(r)?.from ?? Number.POSITIVE_INFINITY;
  return [...reports].sort((a, b) => start(a.report) - start(b.report) || (a.report.run.started_at < b.report.run.started_at ? -1 : a.report.run.started_at > b.report.run.started_at ? 1 : 0) || (a.label < b.label ? -1 : a.label > b.label ? 1 : 0));
}

export function buildHistory(input: readonly LabelledReport[]): History {
  const reports = orderForHistory(input);
  const n = reports.length;
  const entries = reports.map(({ label, report }) => {
    const span = logSpan(report);
    return {
      label, started_at: report.run.started_at, rows: report.input.rows, verdict: report.verdict,
      span: span ? { from: new Date(span.from).toISOString(), to: new Date(span.to).toISOString() } : null,
    };
  });

  const checks = new Map<string, { id: string; title: string; statuses: (string | null)[] }>();
  const targets = new Map<string, { name: string } & Record<TargetSeries, (number | null)[]>>();
  const segments = new Map<string, { segment: Record<string, string>; statuses: (string | null)[]; rows: (number | null)[] }>();
  const findings = new Map<string, { check: string; segment: Record<string, string>; action?: string; target?: string; scope?: string; first: number; last: number; seen: (string | null)[]; message: string }>();
  const blank = <T>(): T[] => new Array<T>(n).fill(null as T);

  reports.forEach(({ report }, i) => {
    for (const c of report.checks) {
      let row = checks.get(c.id);
      if (!row) checks.set(c.id, row = { id: c.id, title: c.title, statuses: blank() });
      row.statuses[i] = c.status;
      for (const f of c.findings) {
        const scope = typeof f.metrics.scope === 'string' ? f.metrics.scope : undefined;
        const key = JSON.stringify([c.id, segmentKey(f.segment), f.action ?? null, f.target ?? null, scope ?? null]);
        let h = findings.get(key);
        if (!h) {
          findings.set(key, h = {
            check: c.id, segment: f.segment, ...(f.action !== undefined ? { action: f.action } : {}), ...(f.target !== undefined ? { target: f.target } : {}),
            ...(scope !== undefined ? { scope } : {}), first: i, last: i, seen: blank(), message: f.message,
          });
        }
        // The worst status when a location holds several windows in one report.
        const rank = (s: string | null) => (s === 'fail' ? 2 : s === 'warn' ? 1 : s === 'pass' ? 0 : -1);
        if (rank(f.status) > rank(h.seen[i] ?? null)) h.seen[i] = f.status;
        h.last = i;
      }
    }
    for (const t of report.targets) {
      let r = targets.get(t.name);
      if (!r) {
        targets.set(t.name, r = { name: t.name, ess: blank(), ess_fraction: blank(), khat: blank(), support_deficit: blank(), snips: blank(), snips_ci_low: blank(), snips_ci_high: blank() });
      }
      r.ess[i] = num(t.ess);
      r.ess_fraction[i] = num(t.ess_fraction);
      r.khat[i] = num(t.khat);
      r.support_deficit[i] = num(t.support_deficit);
      r.snips[i] = num(t.snips.value);
      r.snips_ci_low[i] = num(t.snips.ci_low);
      r.snips_ci_high[i] = num(t.snips.ci_high);
    }
    for (const s of report.segments) {
      const key = segmentKey(s.segment);
      let row = segments.get(key);
      if (!row) segments.set(key, row = { segment: s.segment, statuses: blank(), rows: blank() });
      row.statuses[i] = s.status;
      row.rows[i] = s.rows;
    }
  });

  return {
    schema: HISTORY_SCHEMA_ID,
    entries,
    checks: [...checks.values()],
    targets: [...targets.values()],
    segments: [...segments.values()],
    findings: [...findings.values()].sort((a, b) => a.first - b.first),
  };
}
