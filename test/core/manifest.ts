/** Reading the demo generator's manifest and matching its planted defects to report findings. */
import { readFileSync } from 'node:fs';
import type { Finding, Report } from '../../app/core/model/report.ts';
import type { PlantedDefect } from '../../sample-data/manifest.ts';

export type { PlantedDefect };

export function readManifest(path: string): { defects: PlantedDefect[] } {
  return JSON.parse(readFileSync(path, 'utf8')) as { defects: PlantedDefect[] };
}

const overlaps = (a: { from: string; to: string }, b: { from: string; to: string }) => Date.parse(a.from) < Date.parse(b.to) && Date.parse(b.from) < Date.parse(a.to);

/** A finding matches a planted defect when it names every planted segment value, the planted action
 * whenever the defect has one, and a window overlapping the planted one whenever the defect has one. */
export function matchingFindings(report: Report, defect: PlantedDefect): Finding[] {
  const check = report.checks.find((c) => c.id === defect.kind);
  if (!check) return [];
  return check.findings.filter(
    (f) =>
      f.status !== 'pass' &&
      Object.entries(defect.segment).every(([k, v]) => f.segment[k] === v) &&
      (!defect.action || f.action === defect.action) &&
      (!defect.window || (!!f.window && overlaps(f.window, defect.window))),
  );
}
