/**
 * The obvious hand-written audit a data scientist would write without Counterweight: read the log's
 * Arrow record batches one at a time with apache-arrow and loop over the rows, keeping counts, sums
 * of 1/p, per segment x action x version x day maps, a Set of decision ids, and every weight of the
 * target policy for the tail. It computes the statistics the cube, duplicates and tail queries give.
 */
import { createReadStream } from 'node:fs';
import { RecordBatchReader } from 'apache-arrow';

const DAY_MS = 86_400_000;

interface Cell {
  n: number; nPInvalid: number; nP: number; sIp: number; sIp2: number; minP: number; maxP: number;
  nRw: number; sR: number; sR2: number; sRip: number; sRip2: number; sR2ip2: number; nRNull: number;
}

export interface BaselineResult {
  rows: number;
  cells: number;
  duplicateIds: number;
  invalidPropensities: number;
  ess: number;
  essFraction: number;
  maxWeight: number;
  ips: number;
  minTimeMs: number;
  maxTimeMs: number;
}

/** Target table text "region,device,tenure,promotion,probability" -> q by "region|device|tenure|promotion". */
export function parsePolicyTable(text: string): Map<string, number> {
  const q = new Map<string, number>();
  for (const line of text.trim().split('\n').slice(1)) {
    const [region, device, tenure, promotion, probability] = line.split(',');
    q.set(`${region}|${device}|${tenure}|${promotion}`, Number(probability));
  }
  return q;
}

export async function baselineAudit(arrowPath: string, policyText: string): Promise<BaselineResult> {
  const target = parsePolicyTable(policyText);
  const cells = new Map<string, Cell>();
  const seen = new Set<string>();
  const duplicated = new Set<string>();
  let weights = new Float64Array(1 << 20);
  let nWeights = 0;
  let rows = 0, invalid = 0, sumW = 0, sumW2 = 0, sumWR = 0, nValid = 0;
  let minT = Infinity, maxT = -Infinity;
  const reader = await RecordBatchReader.from(createReadStream(arrowPath));
  let origin: number | null = null;
  for await (const batch of reader) {
    const id = batch.getChild('decision_id')!;
    const time = batch.getChild('logged_at')!;
    const region = batch.getChild('region')!;
    const device = batch.getChild('device')!;
    const tenure = batch.getChild('tenure')!;
    const promotion = batch.getChild('promotion')!;
    const propensity = batch.getChild('propensity')!;
    const ordered = batch.getChild('ordered')!;
    const version = batch.getChild('policy_version')!;
    for (let i = 0; i < batch.numRows; i++) {
      rows++;
      const d = id.get(i) as string | null;
      if (d !== null) {
        if (seen.has(d)) duplicated.add(d);
        else seen.add(d);
      }
      const t = time.get(i) as number | null;
      if (t !== null) {
        if (t < minT) minT = t;
        if (t > maxT) maxT = t;
      }
      origin ??= t === null ? null : Math.floor(t / DAY_MS) * DAY_MS;
      const day = t === null || origin === null ? -1 : Math.floor((t - origin) / DAY_MS);
      const segment = `${region.get(i)}|${device.get(i)}|${tenure.get(i)}`;
      const action = promotion.get(i) as string | null;
      const key = `${segment}|${action}|${version.get(i)}|${day}`;
      let c = cells.get(key);
      if (!c) {
        c = { n: 0, nPInvalid: 0, nP: 0, sIp: 0, sIp2: 0, minP: Infinity, maxP: -Infinity, nRw: 0, sR: 0, sR2: 0, sRip: 0, sRip2: 0, sR2ip2: 0, nRNull: 0 };
        cells.set(key, c);
      }
      c.n++;
      const p = propensity.get(i) as number | null;
      const r = ordered.get(i) as number | null;
      if (r === null) c.nRNull++;
      if (p === null || !(p > 0 && p <= 1)) {
        c.nPInvalid++;
        invalid++;
        continue;
      }
      c.nP++;
      c.sIp += 1 / p;
      c.sIp2 += 1 / (p * p);
      if (p < c.minP) c.minP = p;
      if (p > c.maxP) c.maxP = p;
      const q = target.get(`${segment}|${action}`) ?? 0;
      const w = q / p;
      nValid++;
      sumW += w;
      sumW2 += w * w;
      if (w > 0) {
        if (nWeights === weights.length) {
          const grown = new Float64Array(weights.length * 2);
          grown.set(weights);
          weights = grown;
        }
        weights[nWeights++] = w;
      }
      if (r !== null) {
        c.nRw++;
        c.sR += r;
        c.sR2 += r * r;
        c.sRip += r / p;
        c.sRip2 += r / (p * p);
        c.sR2ip2 += (r * r) / (p * p);
        sumWR += w * r;
      }
    }
  }
  // The largest weights, for a tail fit: sort them all, as one would with numpy.
  const sorted = weights.subarray(0, nWeights).sort();
  const ess = sumW2 > 0 ? (sumW * sumW) / sumW2 : 0;
  return {
    rows,
    cells: cells.size,
    duplicateIds: duplicated.size,
    invalidPropensities: invalid,
    ess,
    essFraction: nValid > 0 ? ess / nValid : 0,
    maxWeight: nWeights > 0 ? sorted[nWeights - 1]! : 0,
    ips: nValid > 0 ? sumWR / nValid : 0,
    minTimeMs: minT,
    maxTimeMs: maxT,
  };
}
