import { expect } from 'vitest';
/** Each pair [got, want] agrees to `tolerance` relative to want (named pairs, so a failure says which). */
export function expectRelativelyClose(pairs: Readonly<Record<string, readonly [number | null, number | null]>>, tolerance: number): void {
  for (const [name, [got, want]] of Object.entries(pairs)) {
    expect(Math.abs((got as number) - (want as number)), name).toBeLessThanOrEqual(tolerance * Math.abs(want as number));
  }
}
