/**
 * Maple Row reward model: P(ordered | segment, hour band, promotion) is logistic in additive effects;
 * an order's basket value is lognormal with a median set by promotion and tenure.
 */
import { N_ACTIONS, N_BANDS, N_SEGMENTS, segmentParts } from './scenario.ts';

const ORDER_INTERCEPT = -2.4;
const ORDER_REGION = [0.1, 0, -0.1, 0.15, -0.05, 0];
const ORDER_DEVICE = [0.15, 0, -0.2];
const ORDER_TENURE = [-0.3, 0.1, 0.45, -0.6];
const ORDER_PROMOTION = [0.25, 0.3, 0.1, 0.35, 0.2, 0.05, 0];
/** Promotion × tenure interactions, rows by TENURES. */
const ORDER_PROMOTION_TENURE = [
  [0, 0, 0, 0.4, 0, 0, 0],
  [0, 0, 0, 0, 0.1, 0, 0],
  [0, 0.2, 0, 0, 0.2, 0, 0],
  [0, 0, 0, 0.5, 0, 0, -0.2],
];
const ORDER_BAND = [-0.3, 0, 0.05, 0.25, -0.1];

/** P(ordered) for every (segment, band, promotion), indexed like LoggingPolicy cells. */
export function orderProbabilities(): Float64Array {
  const out = new Float64Array(N_SEGMENTS * N_BANDS * N_ACTIONS);
  for (let segment = 0; segment < N_SEGMENTS; segment++) {
    const { region, device, tenure } = segmentParts(segment);
    for (let band = 0; band < N_BANDS; band++) {
      for (let a = 0; a < N_ACTIONS; a++) {
        const logit = ORDER_INTERCEPT + ORDER_REGION[region]! + ORDER_DEVICE[device]! + ORDER_TENURE[tenure]!
          + ORDER_PROMOTION[a]! + ORDER_PROMOTION_TENURE[tenure]![a]! + ORDER_BAND[band]!;
        out[(segment * N_BANDS + band) * N_ACTIONS + a] = 1 / (1 + Math.exp(-logit));
      }
    }
  }
  return out;
}

/** Median basket (currency units) and log-scale effects by promotion and tenure. */
const BASKET_MEDIAN = 36;
const BASKET_PROMOTION = [0.15, 0.35, -0.25, 0.05, 0.2, 0.3, 0];
const BASKET_TENURE = [-0.1, 0, 0.15, -0.05];
export const BASKET_SIGMA = 0.45;

/** log-median of the basket for (tenure, promotion), indexed tenure * N_ACTIONS + promotion. */
export function basketLogMedians(): Float64Array {
  const out = new Float64Array(BASKET_TENURE.length * N_ACTIONS);
  BASKET_TENURE.forEach((t, tenure) => {
    for (let a = 0; a < N_ACTIONS; a++) out[tenure * N_ACTIONS + a] = Math.log(BASKET_MEDIAN) + t + BASKET_PROMOTION[a]!;
  });
  return out;
}

/** Box–Muller transform (Box & Muller 1958): a standard normal from two uniforms, u1 in (0, 1]. */
export function standardNormal(u1: number, u2: number): number {
  return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
}
