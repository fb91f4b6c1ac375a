/**
 * "Maple Row Market" (sample-data/README.md): a fictional grocery-delivery app whose home screen shows one of
 * seven promotions per session. Names, time span and the context mix of the invented population.
 */

export const REGIONS = ['north-harbor', 'east-ridge', 'old-town', 'riverside', 'west-fields', 'south-bay'] as const;
export const DEVICES = ['ios', 'android', 'web'] as const;
export const TENURES = ['new', 'regular', 'loyal', 'lapsed'] as const;
export const PROMOTIONS = ['produce-box', 'pantry-restock', 'bakery', 'free-delivery', 'recipe-kit', 'household', 'no-banner'] as const;

export type Region = (typeof REGIONS)[number];
export type Device = (typeof DEVICES)[number];
export type Tenure = (typeof TENURES)[number];
export type Promotion = (typeof PROMOTIONS)[number];

export const N_REGIONS = REGIONS.length;
export const N_DEVICES = DEVICES.length;
export const N_TENURES = TENURES.length;
export const N_ACTIONS = PROMOTIONS.length;
/** Every (region, device, tenure) combination: 72. */
export const N_SEGMENTS = N_REGIONS * N_DEVICES * N_TENURES;

export function segmentIndex(region: number, device: number, tenure: number): number {
  return (region * N_DEVICES + device) * N_TENURES + tenure;
}

export function segmentParts(segment: number): { region: number; device: number; tenure: number } {
  return {
    region: Math.floor(segment / (N_DEVICES * N_TENURES)),
    device: Math.floor(segment / N_TENURES) % N_DEVICES,
    tenure: segment % N_TENURES,
  };
}

export const action = (name: Promotion): number => PROMOTIONS.indexOf(name);
export const regionIndex = (name: Region): number => REGIONS.indexOf(name);
export const deviceIndex = (name: Device): number => DEVICES.indexOf(name);
export const tenureIndex = (name: Tenure): number => TENURES.indexOf(name);

export const HOUR_MS = 3_600_000;
export const DAY_MS = 24 * HOUR_MS;
export const DAYS = 30;
/** 2026-03-02 00:00 UTC, a Monday. */
export const START_MS = Date.UTC(2026, 2, 2);
export const END_MS = START_MS + DAYS * DAY_MS;
/** Day d (1-based) covers [START + (d-1)·24h, START + d·24h). */
export function dayStartMs(day: number): number {
  return START_MS + (day - 1) * DAY_MS;
}
/** Policy v8 replaces v7 from the start of day 16. */
export const V8_FROM_MS = dayStartMs(16);

/** Hour-of-day bands used by the policies and the reward model (the app's clock is UTC). */
export const HOUR_BANDS = ['night', 'morning', 'midday', 'evening', 'late'] as const;
export const N_BANDS = HOUR_BANDS.length;
export function hourBand(hour: number): number {
  if (hour < 6) return 0;
  if (hour < 11) return 1;
  if (hour < 16) return 2;
  if (hour < 21) return 3;
  return 4;
}

/** Share of sessions by region. */
export const REGION_WEIGHTS: readonly number[] = [0.22, 0.18, 0.15, 0.17, 0.14, 0.14];
/** Share of sessions by device within each region (rows follow REGIONS). */
export const DEVICE_WEIGHTS: readonly (readonly number[])[] = [
  [0.44, 0.38, 0.18],
  [0.40, 0.42, 0.18],
  [0.36, 0.38, 0.26],
  [0.42, 0.40, 0.18],
  [0.34, 0.48, 0.18],
  [0.46, 0.34, 0.20],
];
/** Share of sessions by tenure. */
export const TENURE_WEIGHTS: readonly number[] = [0.18, 0.40, 0.27, 0.15];

/** Relative traffic by hour of day (UTC) and by weekday (Monday first). */
export const HOURLY_TRAFFIC: readonly number[] = [
  0.25, 0.15, 0.1, 0.08, 0.08, 0.15, 0.4, 0.7, 0.9, 0.95, 1.0, 1.1,
  1.25, 1.15, 0.95, 0.9, 1.0, 1.3, 1.45, 1.4, 1.15, 0.9, 0.65, 0.4,
];
export const WEEKDAY_TRAFFIC: readonly number[] = [0.95, 0.92, 0.95, 1.0, 1.08, 1.2, 1.15];
