import { describe, expect, it } from 'vitest';
import { durationWords } from '../../../app/core/checks/time-coverage.ts';

// Unit lengths are the SI/ISO 8601 ones: 1 min = 60 s, 1 h = 3,600 s, 1 d = 86,400 s, 1 week = 7 d.
describe('durationWords (the bucket width in the time-coverage summary)', () => {
  it.each([
    [86_400e6, '1 day'],
    [6 * 3_600e6, '6 hours'],
    [3_600e6, '1 hour'],
    [7 * 86_400e6, '1 week'],
    [30 * 86_400e6, '30 days'],
    [90e6, '90 seconds'],
    [15 * 60e6, '15 minutes'],
  ])('%d µs is %s', (us, words) => expect(durationWords(us)).toBe(words));
});
