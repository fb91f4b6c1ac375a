/**
 * The UI's status styles, built on the shared Okabe–Ito palette (app/charts/palette.ts; M. Okabe & K. Ito,
 * "Color Universal Design", 2008, https://jfly.uni-koeln.de/color/). Status is never told by colour alone:
 * every use pairs the colour with an icon and a word.
 */
import { OKABE_ITO, STATUS_COLOURS } from '../app/charts/palette.ts';
import { SHOWN_STATUS } from '../app/charts/labels.ts';

export { OKABE_ITO };

export type StatusKey = 'pass' | 'warn' | 'fail' | 'skipped' | 'error' | 'info' | 'not-applicable' | 'informational' | 'not-run';

export interface StatusStyle {
  readonly colour: string;
  readonly icon: string;
  readonly word: string;
}

export const STATUS_STYLE: Record<StatusKey, StatusStyle> = {
  pass: { colour: STATUS_COLOURS.pass, icon: SHOWN_STATUS.pass.icon, word: SHOWN_STATUS.pass.word },
  warn: { colour: STATUS_COLOURS.warn, icon: SHOWN_STATUS.warn.icon, word: SHOWN_STATUS.warn.word },
  fail: { colour: STATUS_COLOURS.fail, icon: SHOWN_STATUS.fail.icon, word: SHOWN_STATUS.fail.word },
  skipped: { colour: STATUS_COLOURS.skipped, icon: SHOWN_STATUS['not-applicable'].icon, word: SHOWN_STATUS['not-applicable'].word },
  info: { colour: OKABE_ITO.blue, icon: SHOWN_STATUS.informational.icon, word: SHOWN_STATUS.informational.word },
  'not-applicable': { colour: STATUS_COLOURS.skipped, icon: SHOWN_STATUS['not-applicable'].icon, word: SHOWN_STATUS['not-applicable'].word },
  informational: { colour: OKABE_ITO.blue, icon: SHOWN_STATUS.informational.icon, word: SHOWN_STATUS.informational.word },
  'not-run': { colour: STATUS_COLOURS.skipped, icon: SHOWN_STATUS['not-run'].icon, word: SHOWN_STATUS['not-run'].word },
  error: { colour: STATUS_COLOURS.error, icon: SHOWN_STATUS.error.icon, word: SHOWN_STATUS.error.word },
};
