/**
 * Matching findings between two reports. A finding is located by its check, segment, action, target and scope
 * (metrics.scope); findings with the same location pair up by their time windows: two windows match when they
 * overlap. When the two logs cover disjoint periods (this week against last week), a window is placed by its
 * position within its own log's span (0 = first timestamp, 1 = last), so "the last 36 hours" of one log meets
 * "the last 36 hours" of the next.
 */
import type { Finding, Report } from '../model/report.ts';

export interface Span {
  readonly from: number;
  readonly to: number;
}

export function segmentKey(segment: Record<string, string>): string {
  return JSON.stringify(Object.entries(segment).sort(([x], [y]) => (x < y ? -1 : x > y ? 1 : 0)));
}

/** The log's time span from time.coverage (first timestamp to the end of the last bucket). */
export function logSpan(report: Report): Span | null {
  const metrics = report.checks.find((c) => c.id === 'time.coverage')?.metrics;
  const from = typeof metrics?.start === 'string' ? Date.parse(metrics.start) : Number.NaN;
  const endText = typeof metrics?.bucket_end === 'string' ? metrics.bucket_end : metrics?.end;
  const to = typeof endText === 'string' ? Date.parse(endText) : Number.NaN;
  return Number.isFinite(from) && Number.isFinite(to) && to > from ? { from, to } : null;
}

function locationKey(check: string, f: Finding): string {
  const scope = typeof f.metrics.scope === 'string' ? f.metrics.scope : '';
  return JSON.stringify([check, segmentKey(f.segment), f.action ?? null, f.target ?? null, scope]);
}

type Placer = (f: Finding) => Span | null;

function placer(a: Span | null, b: Span | null, mine: Span | null): Placer {
  const disjoint = a !== null && b !== null && !(a.from < b.to && b.from < a.to);
  return (f) => {
    if (!f.window) return null;
    const from = Date.parse(f.window.from);
    const to = Date.parse(f.window.to);
    if (!disjoint || !mine) return { from, to };
    const length = mine.to - mine.from;
    return { from: (from - mine.from) / length, to: (to - mine.from) / length };
  };
}

const overlap = (x: Span, y: Span): number => Math.min(x.to, y.to) - Math.max(x.from, y.from);

export interface FindingPair {
  readonly check: string;
  readonly baseline?: Finding;
  readonly current?: Finding;
}

/** Every finding of either report exactly once: paired with its match, or alone. Baseline order first, then new ones. */
export function matchFindings(a: Report, b: Report, spanA: Span | null, spanB: Span | null): FindingPair[] {
  const placeA = placer(spanA, spanB, spanA);
  const placeB = placer(spanA, spanB, spanB);
  const groups = new Map<string, { check: string; a: Finding[]; b: Finding[] }>();
  const add = (report: Report, side: 'a' | 'b') => {
    for (const c of report.checks) {
      for (const f of c.findings) {
        const key = locationKey(c.id, f);
        let g = groups.get(key);
        if (!g) groups.set(key, g = { check: c.id, a: [], b: [] });
        g[side].push(f);
      }
    }
  };
  add(a, 'a');
  add(b, 'b');
  const pairs: FindingPair[] = [];
  const added: FindingPair[] = [];
  for (const g of groups.values()) {
    const taken = new Set<number>();
    for (const fa of g.a) {
      const wa = placeA(fa);
      let best = -1;
      let bestOverlap = 0;
      g.b.forEach((fb, j) => {
        if (taken.has(j)) return;
        const wb = placeB(fb);
        if (wa === null && wb === null) {
          if (best === -1) { best = j; bestOverlap = Number.POSITIVE_INFINITY; }
          return;
        }
        if (wa === null || wb === null) return;
        const o = overlap(wa, wb);
        if (o > 0 && o > bestOverlap) { best = j; bestOverlap = o; }
      });
      if (best >= 0) {
        taken.add(best);
        pairs.push({ check: g.check, baseline: fa, current: g.b[best]! });
      } else {
        pairs.push({ check: g.check, baseline: fa });
      }
    }
    g.b.forEach((fb, j) => { if (!taken.has(j)) added.push({ check: g.check, current: fb }); });
  }
  return [...pairs, ...added];
}
