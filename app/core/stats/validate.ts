/** Argument checks shared by the statistics: each throws a RangeError naming the argument and its value. */

export function requireFinite(name: string, x: number): void {
  if (!Number.isFinite(x)) throw new RangeError(`${name} must be a finite number, got ${String(x)}`);
}

export function requireNonNegative(name: string, x: number): void {
  if (!Number.isFinite(x) || x < 0) throw new RangeError(`${name} must be a finite number >= 0, got ${String(x)}`);
}

export function requirePositive(name: string, x: number): void {
  if (!Number.isFinite(x) || x <= 0) throw new RangeError(`${name} must be a finite number > 0, got ${String(x)}`);
}

export function requireCount(name: string, x: number): void {
  if (!Number.isSafeInteger(x) || x < 0) throw new RangeError(`${name} must be a whole number >= 0, got ${String(x)}`);
}

export function requireProbability(name: string, x: number): void {
  if (!(x >= 0 && x <= 1)) throw new RangeError(`${name} must be a probability in [0, 1], got ${String(x)}`);
}
