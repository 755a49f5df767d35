// Guards shared by the risk formulas. A risk number decides which alert a person looks at next,
// so an impossible input (a NaN score, a recovery rate of 1.4) must stop loudly with a RangeError
// that names the argument, never turn quietly into a plausible-looking priority.

export function assertFinite(value: number, name: string): void {
  if (typeof value !== "number" || !Number.isFinite(value)) {
    throw new RangeError(`${name} must be a finite number, got ${String(value)}`);
  }
}

export function assertNonNegative(value: number, name: string): void {
  assertFinite(value, name);
  if (value < 0) {
    throw new RangeError(`${name} must be >= 0, got ${value}`);
  }
}

export function assertPositive(value: number, name: string): void {
  assertFinite(value, name);
  if (value <= 0) {
    throw new RangeError(`${name} must be > 0, got ${value}`);
  }
}

export function assertProbability(value: number, name: string): void {
  assertFinite(value, name);
  if (value < 0 || value > 1) {
    throw new RangeError(`${name} must be a probability in [0, 1], got ${value}`);
  }
}

// Money is held in integer minor units (DESIGN.md §2); a fractional amount means a caller mixed up
// major and minor units, and the safe-integer bound keeps arithmetic on it exact.
export function assertMinorUnits(value: number, name: string): void {
  if (typeof value !== "number" || !Number.isSafeInteger(value) || value < 0) {
    throw new RangeError(`${name} must be a non-negative integer number of minor units, got ${String(value)}`);
  }
}

export function assertCount(value: number, name: string): void {
  if (typeof value !== "number" || !Number.isSafeInteger(value) || value < 0) {
    throw new RangeError(`${name} must be a non-negative integer, got ${String(value)}`);
  }
}

export function assertValidDate(value: Date, name: string): void {
  if (!(value instanceof Date) || Number.isNaN(value.getTime())) {
    throw new RangeError(`${name} must be a valid Date, got ${String(value)}`);
  }
}
