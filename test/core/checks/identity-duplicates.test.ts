/** identity.duplicates from hand-written rows: duplicated decision ids warn, and block above their stated share. */
import { describe, expect, it } from 'vitest';
import { runChecks } from '../../../app/core/audit.ts';
import { verdictOf } from '../../../app/core/verdict.ts';
import { SETTINGS } from '../../../app/core/settings.ts';
import { contextOf, grid } from './build.ts';

/** 1,000 rows (2 segments × 2 actions × 250 at p = 0.5, reward 1); `extra` rows beyond the first of each duplicated id. */
const withExtra = (extra: number) =>
  runChecks(contextOf(grid([['x'], ['y']], ['a', 'b'], () => 0.5, () => 250, 1), { duplicates: { ids: extra, rowsInDuplicates: 2 * extra, extraRows: extra, maxCopies: extra ? 2 : 0, exampleIds: extra ? ['d1'] : [] } }));

describe('identity.duplicates', () => {
  it('the fail share is stated in settings with its source (1% of rows, common practice)', () => {
    expect(SETTINGS['identity.duplicates.fail_share'].default).toBe(0.01);
    expect(SETTINGS['identity.duplicates.fail_share'].source).toBe('common practice');
  });

  it.each([
    // extra rows / 1000 rows against the 1% share, by hand: 0 → pass; 10 = 1.0% (not above) → warn, a caveat; 11 = 1.1% → fail, blocks
    { extra: 0, status: 'pass', verdict: 'supported' },
    { extra: 10, status: 'warn', verdict: 'supported-with-caveats' },
    { extra: 11, status: 'fail', verdict: 'not-supported' },
  ])('$extra extra rows in 1,000: $status, verdict $verdict', ({ extra, status, verdict }) => {
    const results = withExtra(extra);
    const d = results.find((r) => r.id === 'identity.duplicates')!;
    expect(d.status).toBe(status);
    expect(d.metrics.extra_share).toBeCloseTo(extra / 1000, 15);
    expect(verdictOf(results).verdict).toBe(verdict);
  });
});
