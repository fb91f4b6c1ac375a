/**
 * The UI's status styles, built on the shared Okabe–Ito palette (app/charts/palette.ts; M. Okabe & K. Ito,
 * "Color Universal Design", 2008, https://jfly.uni-koeln.de/color/). Status is never told by colour alone:
 * every use pairs the colour with an icon and a word.
 */
import { OKABE_ITO, STATUS_COLOURS, STATUS_LABELS } from '../app/charts/palette.ts';

export { OKABE_ITO };

export type StatusKey = 'pass' | 'warn' | 'fail' | 'skipped' | 'error' | 'info';

export interface StatusStyle {
  readonly colour: string;
  readonly icon: string;
  readonly word: string;
}

export const STATUS_STYLE: Record<StatusKey, StatusStyle> = {
  pass: { colour: STATUS_COLOURS.pass, icon: STATUS_LABELS.pass.icon, word: 'Pass' },
  warn: { colour: STATUS_COLOURS.warn, icon: STATUS_LABELS.warn.icon, word: 'Warning' },
  fail: { colour: STATUS_COLOURS.fail, icon: STATUS_LABELS.fail.icon, word: 'Fail' },
  skipped: { colour: STATUS_COLOURS.skipped, icon: STATUS_LABELS.skipped.icon, word: 'Skipped' },
  error: { colour: STATUS_COLOURS.error, icon: STATUS_LABELS.error.icon, word: 'Error' },
  info: { colour: OKABE_ITO.blue, icon: 'i', word: 'Info' },
};
