/**
 * Colour-blind-safe colours after Okabe & Ito, "Color Universal Design" (2002/2008), the eight-colour set
 * (also Wong, Nature Methods 8:441, 2011). Status is always printed as text too; colour never carries it alone.
 */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const;

/** Series order: strongest contrasts on white first; yellow last (weak on white). */
export const SERIES_COLOURS: readonly string[] = [
  OKABE_ITO.blue, OKABE_ITO.orange, OKABE_ITO.bluishGreen, OKABE_ITO.vermillion,
  OKABE_ITO.reddishPurple, OKABE_ITO.skyBlue, OKABE_ITO.black, OKABE_ITO.yellow,
];

export type StatusName = 'pass' | 'warn' | 'fail' | 'skipped' | 'error';

export const STATUS_COLOURS: Record<StatusName, string> = {
  pass: OKABE_ITO.bluishGreen,
  warn: OKABE_ITO.orange,
  fail: OKABE_ITO.vermillion,
  skipped: '#7F7F7F',
  error: OKABE_ITO.reddishPurple,
};

/** Text and symbol shown with every status, so it reads in greyscale print and without colour vision. */
export const STATUS_LABELS: Record<StatusName, { text: string; icon: string }> = {
  pass: { text: 'PASS', icon: '✓' },
  warn: { text: 'WARN', icon: '!' },
  fail: { text: 'FAIL', icon: '✕' },
  skipped: { text: 'SKIPPED', icon: '–' },
  error: { text: 'ERROR', icon: '⚠' },
};

/** Sequential single-hue ramp, ColorBrewer "Blues" (Brewer, colorbrewer2.org) ending in Okabe–Ito blue: ordered by lightness, so it survives greyscale. */
export const SEQUENTIAL_RAMP: readonly string[] = ['#F7FBFF', '#C6DBEF', '#6BAED6', '#2171B5', OKABE_ITO.blue];

export function seriesColour(index: number): string {
  return SERIES_COLOURS[index % SERIES_COLOURS.length] as string;
}
